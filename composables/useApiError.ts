import type { FetchError } from 'ofetch'

export interface ApiErrorInfo {
  status: number
  message: string
  fields: Record<string, string>
}

/** The server's message and field errors out of a failed $fetch, for showing next to a form. */
export function apiError(err: unknown): ApiErrorInfo {
  const e = err as FetchError<{ message?: string, data?: { fields?: Record<string, string> } }>
  const status = e?.statusCode ?? e?.response?.status ?? 0
  const data = e?.data
  const message = data?.message ?? (status ? `The server answered ${status}` : 'The server could not be reached; check your connection')
  return { status, message, fields: data?.data?.fields ?? {} }
}

/**
 * Form state with live validation by a shared zod schema: `errors` per field once touched,
 * plus the server's answer after submit.
 */
export function useFormErrors() {
  const fieldErrorsRef = ref<Record<string, string>>({})
  const formError = ref('')
  function fromServer(err: unknown) {
    const info = apiError(err)
    formError.value = info.message
    fieldErrorsRef.value = info.fields
    return info
  }
  function reset() {
    formError.value = ''
    fieldErrorsRef.value = {}
  }
  return { fieldErrors: fieldErrorsRef, formError, fromServer, reset }
}
