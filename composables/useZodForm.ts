import type { z } from 'zod'
import type { ShownField } from '~/utils/apiError'

/** How a form shows a refusal: the fields it has a message under, and its element (for focus). */
export interface RefusalPlace {
  /** the keys (or row patterns) the form shows a message under; without: every field */
  shown?: readonly ShownField[]
  form?: Ref<HTMLElement | null>
}

/**
 * After a refused submit: keyboard focus to the first field marked invalid in the form, else to
 * its banner, so it never drops to the page's body.
 */
export async function focusFirstProblem(form: HTMLElement | null | undefined) {
  await nextTick()
  if (!form) return
  const bad = form.querySelector<HTMLElement>('[aria-invalid="true"]:not([disabled])')
  const target = bad ?? form.querySelector<HTMLElement>('[data-testid="form-error"]')
  target?.focus()
}

/**
 * What every form shares: the submit attempt, the pending flag and the server's answer (its
 * message for the form, its messages per field, cleared as soon as the values change). Each
 * message is said once: under its field when the form shows that field, else in the banner.
 */
function useSubmission(values: object, place: RefusalPlace = {}) {
  const submitted = ref(false)
  const pending = ref(false)
  const formError = ref('')
  const serverFields = ref<Record<string, string>>({})

  watch(() => ({ ...values }), () => { serverFields.value = {} }, { deep: true })

  /** Marks the attempt; when `valid()`, runs `send`. True once `send` has succeeded. */
  async function attempt(valid: () => boolean, send: () => Promise<void>): Promise<boolean> {
    submitted.value = true
    formError.value = ''
    if (!valid()) {
      void focusFirstProblem(place.form?.value)
      return false
    }
    pending.value = true
    try {
      await send()
      return true
    }
    catch (err) {
      const info = apiError(err)
      if (place.shown) {
        const { fields, rest } = placeRefusal(info, place.shown)
        formError.value = rest
        serverFields.value = fields
      }
      else {
        formError.value = info.message
        serverFields.value = info.fields
      }
      pending.value = false
      void focusFirstProblem(place.form?.value)
      return false
    }
    finally {
      pending.value = false
    }
  }

  return { submitted, pending, formError, serverFields, attempt }
}

/**
 * A form validated as you type by the same zod schema the server uses. A field's message shows
 * once it has been touched (or after a submit attempt); the server's messages replace them.
 */
export function useZodForm<S extends z.ZodObject>(schema: S, initial: z.input<S>, place: RefusalPlace = {}) {
  const values = reactive({ ...initial }) as z.input<S>
  const touched = reactive<Record<string, boolean>>({})
  const { submitted, pending, formError, serverFields, attempt } = useSubmission(values, place)

  const clientErrors = computed(() => {
    const r = schema.safeParse(values)
    return r.success ? {} : fieldErrors(r.error)
  })

  const errors = computed(() => {
    const out: Record<string, string> = {}
    for (const [k, v] of Object.entries(clientErrors.value)) {
      if (submitted.value || touched[k]) out[k] = v
    }
    return { ...out, ...serverFields.value }
  })

  /** Validates, then runs `send` with the parsed values; server errors land in the form. */
  async function submit(send: (data: z.output<S>) => Promise<void>) {
    let parsed: z.output<S> | undefined
    const valid = () => {
      const r = schema.safeParse(values)
      parsed = r.data
      return r.success
    }
    if (await attempt(valid, () => send(parsed!))) {
      // a fresh start: fields the sender cleared don't show "required" at once
      submitted.value = false
      for (const k of Object.keys(touched)) touched[k] = false
    }
  }

  return { values, touched, errors, formError, pending, submit }
}

/**
 * A form whose checks the component works out itself (`clientErrors`: field → message, for
 * rules beyond one schema), shown only after a submit attempt; the server's messages join them.
 */
export function useCheckedForm(values: object, clientErrors: Ref<Record<string, string>>, place: RefusalPlace = {}) {
  const { submitted, pending, formError, serverFields, attempt } = useSubmission(values, place)
  const errors = computed<Record<string, string>>(() => ({ ...(submitted.value ? clientErrors.value : {}), ...serverFields.value }))

  /** Runs `send` when there is nothing to correct; server errors land in the form. */
  async function submit(send: () => Promise<void>) {
    await attempt(() => !Object.keys(clientErrors.value).length, send)
  }

  return { errors, formError, pending, submit }
}
