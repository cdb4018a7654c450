import type { H3Event } from 'h3'
import { z } from 'zod'

/** Parses input with a zod schema; a failure is a 400 naming the fields. */
export function parseOr400<T extends z.ZodType>(schema: T, input: unknown, statusCode = 400): z.output<T> {
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

/** A uuid route parameter; anything else is a 404 (no such row). */
export function uuidParam(event: H3Event, name: string): string {
  const value = getRouterParam(event, name) ?? ''
  if (!z.uuid().safeParse(value).success) throw createError({ statusCode: 404, message: 'Not found' })
  return value
}
