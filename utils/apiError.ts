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
