import { describe, expect, it } from 'vitest'
import { formatDate } from '../../../utils/dateFormat'

describe('formatDate: the same text on the server and in any browser (UTC, en-GB)', () => {
  it.each([
    ['2026-03-03T14:05:00Z', false, '3 Mar 2026'],
    ['2026-03-03T14:05:00Z', true, '3 Mar 2026, 14:05 UTC'],
    // 23:30 in UTC−5 is already the next day in UTC
    ['2026-12-31T23:30:00-05:00', false, '1 Jan 2027'],
    ['2026-12-31T23:30:00-05:00', true, '1 Jan 2027, 04:30 UTC'],
    ['2026-02-28', false, '28 Feb 2026'],
    ['not a date', false, 'not a date'],
    [null, false, '—'],
    ['', true, '—'],
  ] as const)('%j (with time: %s) → %j', (iso, withTime, text) => {
    expect(formatDate(iso, withTime)).toBe(text)
  })
})
