import { describe, expect, it } from 'vitest'
import { findUnstorableText, unstorableReason } from '#shared/utils/storableText'

// PostgreSQL: "The character with the code zero cannot be in a string constant" (text) and
// jsonb rejects \u0000 (PostgreSQL docs, 8.14 JSON Types); a lone surrogate is not a Unicode
// scalar value, so it has no UTF-8 form (Unicode Standard, 3.9 D76 and D92).

describe('unstorableReason', () => {
  it.each([
    ['a\u0000b', /NUL/],
    ['\uD800', /lone surrogate/],
    ['x\uDC00', /lone surrogate/],
    ['\uDC00\uD800', /lone surrogate/], // a pair in the wrong order is two lone halves
  ])('%j can’t be stored', (text, reason) => {
    expect(unstorableReason(text)).toMatch(reason)
  })

  it.each(['', 'plain', 'Gauge 😀 (a surrogate pair)', 'tab\tnew\nline', '\u202E\uFEFF', 'ß∑'])('%j can', (text) => {
    expect(unstorableReason(text)).toBeNull()
  })
})

describe('findUnstorableText', () => {
  it('names the first bad string by its path, in reading order', () => {
    expect(findUnstorableText({ label: 'R1', changes: ['fine', 'a\u0000', '\uD800'] })).toEqual({ path: 'changes.1', message: expect.stringMatching(/NUL/) })
    expect(findUnstorableText({ a: { b: [{ c: '\uDBFF' }] } })?.path).toBe('a.b.0.c')
    expect(findUnstorableText('a\u0000')?.path).toBe('_')
  })

  it('names a bad key too', () => {
    expect(findUnstorableText({ ok: 1, ['k\u0000']: 'v' })?.path).toBe('"k\\u0000"')
  })

  it('passes numbers, booleans, null and well-formed text', () => {
    expect(findUnstorableText({ n: 1e308, b: true, z: null, s: ['😀', { t: 'ok' }] })).toBeNull()
  })

  it('walks 100,000 levels of nesting without overflowing the call stack', () => {
    let deep: unknown = 'bottom\u0000'
    for (let i = 0; i < 100_000; i++) deep = [deep]
    const found = findUnstorableText(deep)
    expect(found?.path.split('.').length).toBe(100_000)
  })
})
