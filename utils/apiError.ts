import type { FetchError } from 'ofetch'

export interface ApiErrorInfo {
  status: number
  message: string
  fields: Record<string, string>
  /** the server's message as sent, its field path included; absent when it sent none */
  raw?: string
}

/**
 * The server prefixes a refusal with the path of the field it is about ("unit: Unknown unit …",
 * "parameters.0.name: …"): a person reads the message beside the field, so the path goes.
 */
export function plainMessage(message: string, fields: Record<string, string> = {}): string {
  for (const path of Object.keys(fields)) {
    if (message.startsWith(`${path}: `)) return message.slice(path.length + 2)
  }
  return message
}

/** The server's message and field errors out of a failed $fetch, for showing next to a form. */
export function apiError(err: unknown): ApiErrorInfo {
  const e = err as FetchError<{ message?: string, data?: { fields?: Record<string, string> } }>
  const status = e?.statusCode ?? e?.response?.status ?? 0
  const data = e?.data
  const fields = data?.data?.fields ?? {}
  const message = data?.message != null
    ? plainMessage(data.message, fields)
    : (status ? `The server answered ${status}` : 'The server could not be reached; check your connection')
  return data?.message != null ? { status, message, fields, raw: data.message } : { status, message, fields }
}

/** A field a form shows its own message under: its key, or a pattern for rows ("parameters.3.name"). */
export type ShownField = string | RegExp

/**
 * Where each of the server's field messages goes in a form: a path the form shows as it is, else
 * its first part ("values.2" → "values") when the form shows that. `rest` holds what no field
 * shows, so the form's banner carries only those and nothing is said twice.
 */
export function placeRefusal(info: Pick<ApiErrorInfo, 'message' | 'fields'> & { raw?: string }, shown: readonly ShownField[]): { fields: Record<string, string>, rest: string } {
  const shows = (key: string) => shown.some(s => (typeof s === 'string' ? s === key : s.test(key)))
  const fields: Record<string, string> = {}
  const left: string[] = []
  // the field the whole message was about ("label: A revision labelled …") gets the whole
  // message: it says more than the field's short note ("Taken")
  const about = info.raw ? Object.keys(info.fields).find(path => info.raw!.startsWith(`${path}: `)) : undefined
  for (const [path, note] of Object.entries(info.fields)) {
    const text = path === about ? info.message : note
    const head = path.split('.')[0]!
    const key = shows(path) ? path : shows(head) ? head : null
    if (key === null) left.push(text)
    else fields[key] ??= text
  }
  const placed = Object.keys(fields).length > 0
  return { fields, rest: !placed ? info.message : left.join(' ') }
}
