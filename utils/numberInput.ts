// Numbers as people type or paste them into a form.

const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:e[+-]?\d+)?$/i

/** One typed number: null when empty, NaN when it is not a plain decimal number. */
export function parseNumber(text: string | number | null | undefined): number | null {
  if (typeof text === 'number') return Number.isFinite(text) ? text : Number.NaN
  const s = (text ?? '').trim().replace(/\u2212/g, '-')
  if (!s) return null
  return NUMBER.test(s) ? Number(s) : Number.NaN
}

export interface ParsedSamples {
  values: number[]
  /** Tokens that are not numbers, as typed. */
  bad: string[]
}

/** Samples typed or pasted as a column or a row: separated by new lines, commas, semicolons, tabs or spaces. */
export function parseSamples(text: string): ParsedSamples {
  const values: number[] = []
  const bad: string[] = []
  for (const token of text.split(/[\s,;]+/)) {
    if (!token) continue
    const x = parseNumber(token)
    if (x == null) continue
    if (Number.isFinite(x)) values.push(x)
    else bad.push(token)
  }
  return { values, bad }
}
