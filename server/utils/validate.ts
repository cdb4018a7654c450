import type { H3Event } from 'h3'
import { z } from 'zod'
import { findUnstorableText } from '#shared/utils/storableText'

/**
 * A 400 (or `statusCode`: 404 for route parameters, which name rows) naming the first string
 * PostgreSQL can't store (a NUL, a lone surrogate), anywhere in input.
 */
export function assertStorableText(input: unknown, statusCode = 400): void {
  const bad = findUnstorableText(input)
  if (bad) throw createError({ statusCode, message: `${bad.path}: ${bad.message}`, data: { fields: { [bad.path]: bad.message } } })
}

/**
 * Parses input with a zod schema; a failure is a 400 naming the fields. Every string in the input
 * is checked first for text PostgreSQL can't store, so no schema has to.
 */
export function parseOr400<T extends z.ZodType>(schema: T, input: unknown, statusCode = 400): z.output<T> {
  assertStorableText(input, statusCode)
  const result = schema.safeParse(input)
  if (result.success) return result.data
  const fields = fieldErrors(result.error)
  const [path, message] = Object.entries(fields)[0] ?? ['_', 'Invalid input']
  throw createError({
    statusCode,
    message: path === '_' ? message : `${path}: ${message}`,
    data: { fields },
  })
}

export async function bodyAs<T extends z.ZodType>(event: H3Event, schema: T): Promise<z.output<T>> {
  let raw: unknown
  try {
    raw = await readBody(event)
  }
  catch {
    throw createError({ statusCode: 400, message: 'The request body is not valid JSON' })
  }
  return parseOr400(schema, raw ?? {})
}

export function queryAs<T extends z.ZodType>(event: H3Event, schema: T): z.output<T> {
  return parseOr400(schema, getQuery(event))
}

export function paramsAs<T extends z.ZodType>(event: H3Event, schema: T): z.output<T> {
  return parseOr400(schema, getRouterParams(event, { decode: true }), 404)
}

export const IdParam = z.object({ id: z.uuid({ error: 'Not found' }) })

/** A decoded text route parameter (a label, a key); text that can't be stored names no row: a 404. */
export function textParam(event: H3Event, name: string): string {
  const value = getRouterParam(event, name, { decode: true }) ?? ''
  assertStorableText({ [name]: value }, 404)
  return value
}

/** A uuid route parameter; anything else is a 404 (no such row). */
export function uuidParam(event: H3Event, name: string): string {
  const value = getRouterParam(event, name) ?? ''
  if (!z.uuid().safeParse(value).success) throw createError({ statusCode: 404, message: 'Not found' })
  return value
}
