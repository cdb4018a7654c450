import { describe, expect, it } from 'vitest'
import { defaultComparePair, type PairTarget } from '../../../utils/comparePair'

// The pair "Compare" opens on. The scale rule (|Δ| over the combined 95 % half-widths) is
// Ratchet's own ordering choice (common practice, no source); the figures are worked by hand.
const entry = (revision: string, mean: number, half: number | null, real: boolean | null = null, movement: string | null = null, delta: number | null = null) =>
  ({ revision, mean, ci95: half == null ? null : [mean - half, mean + half] as const, real, movement, delta })

const revisions = ['R1', 'R2', 'R3', 'R4', 'R5']

describe('defaultComparePair', () => {
  it('opens on the newest two revisions when nothing moved beyond the scatter', () => {
    const t: PairTarget = { history: [entry('R1', 10, 1), entry('R2', 10.2, 1, false, 'steady', 0.2), entry('R5', 10.1, 1, false, 'steady', -0.1)] }
    expect(defaultComparePair([t], revisions)).toEqual({ a: 'R4', b: 'R5', size: null })
  })

  it('picks the pair of the largest real movement, measured against each target\'s own intervals', () => {
    // torque R1 → R2: Δ 3 N·m, U 1 and 1 → 3/√2 = 2.12; speed R3 → R5 (R4 unmeasured): Δ 0.5 km/h, U 0.1, 0.1 → 3.54
    const torque: PairTarget = { history: [entry('R1', 39, 1), entry('R2', 42, 1, true, 'gained', 3), entry('R3', 42.1, 1, false, 'steady', 0.1)] }
    const speed: PairTarget = { history: [entry('R5', 24.5, 0.1, true, 'gained', 0.5), entry('R3', 24, 0.1)] }
    const pair = defaultComparePair([torque, speed], revisions)
    expect(pair.a).toBe('R3')
    expect(pair.b).toBe('R5')
    expect(pair.size).toBeCloseTo(0.5 / Math.hypot(0.1, 0.1), 9)
  })

  it('measures a single-sample movement against the noise band, and a slip counts like a gain', () => {
    const mass: PairTarget = { noiseBand: 0.2, history: [entry('R2', 5, null), entry('R3', 6, null, true, 'slipped', 1)] }
    const torque: PairTarget = { history: [entry('R1', 39, 1), entry('R2', 42, 1, true, 'gained', 3)] }
    // mass: 1 / 0.2 = 5 beats torque's 2.12
    expect(defaultComparePair([torque, mass], revisions)).toEqual({ a: 'R2', b: 'R3', size: 5 })
  })

  it('breaks a tie in favour of the later pair and ignores revisions the build no longer has', () => {
    const t: PairTarget = { history: [entry('R1', 0, 1), entry('R2', 2, 1, true, 'gained', 2), entry('R4', 4, 1, true, 'gained', 2), entry('gone', 100, 1, true, 'gained', 96)] }
    expect(defaultComparePair([t], revisions)).toMatchObject({ a: 'R2', b: 'R4' })
  })

  it('answers empty labels for a build without revisions', () => {
    expect(defaultComparePair([], [])).toEqual({ a: '', b: '', size: null })
  })
})
