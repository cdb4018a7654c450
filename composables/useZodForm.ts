import type { z } from 'zod'

/**
 * A form validated as you type by the same zod schema the server uses. A field's message shows
 * once it has been touched (or after a submit attempt); the server's messages replace them.
 */
export function useZodForm<S extends z.ZodObject>(schema: S, initial: z.input<S>) {
  const values = reactive({ ...initial }) as z.input<S>
  const touched = reactive<Record<string, boolean>>({})
  const serverFields = ref<Record<string, string>>({})
  const formError = ref('')
  const submitted = ref(false)
  const pending = ref(false)

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

  watch(() => ({ ...values }), () => { serverFields.value = {} }, { deep: true })

  /** Validates, then runs `send` with the parsed values; server errors land in the form. */
  async function submit(send: (data: z.output<S>) => Promise<void>) {
    submitted.value = true
    formError.value = ''
    const r = schema.safeParse(values)
    if (!r.success) return
    pending.value = true
    try {
      await send(r.data)
      // a fresh start: fields the sender cleared don't show "required" at once
      submitted.value = false
      for (const k of Object.keys(touched)) touched[k] = false
    }
    catch (err) {
      const info = apiError(err)
      formError.value = info.message
      serverFields.value = info.fields
    }
    finally {
      pending.value = false
    }
  }

  return { values, touched, errors, formError, pending, submit }
}
