/**
 * PostgreSQL stores no NUL character in text or jsonb, and no lone UTF-16 surrogate in jsonb
 * (JSON text can carry either, e.g. "\u0000" or "\ud800"). The validation layer refuses such
 * input up front, so it is a 400 naming the field instead of a database error.
 */
export interface UnstorableText {
  /** the field's path, e.g. "changes.2" or "name" (a key that is itself bad is named too) */
  path: string
  message: string
}

// a high surrogate not followed by a low one, or a low one not preceded by a high one
const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/

export function unstorableReason(text: string): string | null {
  if (text.includes('\u0000')) return 'Text can’t contain the NUL character'
  if (LONE_SURROGATE.test(text)) return 'Text can’t contain a lone surrogate (broken UTF-16)'
  return null
}

interface Node { value: unknown, key: string | null, parent: Node | null }

function pathOf(node: Node | null, last?: string): string {
  const keys: string[] = last === undefined ? [] : [last]
  for (let n = node; n; n = n.parent) if (n.key !== null) keys.push(n.key)
  return keys.reverse().join('.') || '_'
}

/**
 * The first string in `input` (values and keys of objects and arrays, at any depth) that can't
 * be stored, or null. Walks with its own stack, so deep nesting can't overflow the call stack.
 */
export function findUnstorableText(input: unknown): UnstorableText | null {
  const stack: Node[] = [{ value: input, key: null, parent: null }]
  while (stack.length > 0) {
    const node = stack.pop()!
    const { value } = node
    if (typeof value === 'string') {
      const message = unstorableReason(value)
      if (message) return { path: pathOf(node), message }
    }
    else if (value !== null && typeof value === 'object') {
      const entries = Array.isArray(value) ? value.map((v, i) => [String(i), v] as const) : Object.entries(value)
      for (const [key] of entries) {
        const message = unstorableReason(key)
        if (message) return { path: pathOf(node, JSON.stringify(key)), message }
      }
      // pushed in reverse, so the first bad field in reading order is the one named
      for (let i = entries.length - 1; i >= 0; i--) stack.push({ value: entries[i]![1], key: entries[i]![0], parent: node })
    }
  }
  return null
}

/** A date (YYYY-MM-DD) or date-time in the years PostgreSQL and people use. */
export function plausibleYear(text: string): boolean {
  const year = Number(text.slice(0, 4))
  return year >= 1900 && year <= 2999
}
