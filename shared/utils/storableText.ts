import type { z } from 'zod'

// PostgreSQL stores no NUL character in text or jsonb; refusing it up front keeps such input a
// 400 instead of a database error.
export function storableText<T extends z.ZodType<string>>(schema: T): T {
  return schema.refine(s => !s.includes('\u0000'), { error: 'Text can’t contain the NUL character' }) as unknown as T
}

/** A date (YYYY-MM-DD) or date-time in the years PostgreSQL and people use. */
export function plausibleYear(text: string): boolean {
  const year = Number(text.slice(0, 4))
  return year >= 1900 && year <= 2999
}
