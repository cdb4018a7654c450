import { describe, expect, it } from 'vitest'
import type { TargetDesign } from '#shared/types/api'
import { calibrationTrend, changedParameters, parameterRows, parameterText, type RevisionParams } from '../../../utils/designView'

const p = (key: string, value: number | string, unit: string | null = null, tolerance: number | null = null) => ({ key, name: key, value, unit, tolerance })

// R1 sets speed and radius; R2 (child of R1) changes the radius and adds a note; R3 (child of R2) sets nothing.
const revisions: RevisionParams[] = [
  { label: 'R1', parent: null, parameters: [p('motor_speed', 3000, 'rpm'), p('wheel_radius', 50, 'mm', 0.5)] },
  { label: 'R2', parent: 'R1', parameters: [p('wheel_radius', 55, 'mm', 0.5), p('carrier', '6061-T6')] },
  { label: 'R3', parent: 'R2', parameters: [p('motor_speed', 3000, 'rpm')] },
]

describe('parameterRows: where a revision’s effective parameters come from', () => {
  it('the first revision sets its own, with no parent to compare', () => {
    expect(parameterRows(revisions, 'R1').map(r => [r.parameter.key, r.source, r.from, r.change])).toEqual([
      ['motor_speed', 'own', 'R1', null],
      ['wheel_radius', 'own', 'R1', null],
    ])
  })

  it('a child inherits what it doesn’t set, and its changes name the parent’s value', () => {
    const rows = parameterRows(revisions, 'R2')
    expect(rows.map(r => [r.parameter.key, r.source, r.from, r.change])).toEqual([
      ['motor_speed', 'inherited', 'R1', 'same'],
      ['wheel_radius', 'own', 'R2', 'changed'],
      ['carrier', 'own', 'R2', 'new'],
    ])
    expect(rows[1]!.before?.value).toBe(50)
  })

  it('setting the parent’s value again is own but the same; inherited keys name the revision that set them', () => {
    const rows = parameterRows(revisions, 'R3')
    expect(rows.map(r => [r.parameter.key, r.source, r.from, r.change])).toEqual([
      ['motor_speed', 'own', 'R3', 'same'],
      ['wheel_radius', 'inherited', 'R2', 'same'],
      ['carrier', 'inherited', 'R2', 'same'],
    ])
    expect(parameterRows(revisions, 'R9')).toEqual([])
  })

  it('writes a parameter as value ± tolerance unit, or its text', () => {
    expect(parameterText(p('wheel_radius', 55, 'mm', 0.5))).toBe('55 ± 0.5 mm')
    expect(parameterText(p('motor_speed', 3000, 'rpm'))).toBe('3000 rpm')
    expect(parameterText(p('ratio', 1.4))).toBe('1.4')
    expect(parameterText(p('carrier', '6061-T6'))).toBe('6061-T6')
  })
})

describe('calibrationTrend: the factor after each revision with a ratio', () => {
  it('weights by 1/u² as it goes (GUM 5.1.2 eq. 10 on the weighted mean: u = (Σ 1/uᵢ²)^−½)', () => {
    const rev = (revision: string, ratio: { value: number, u: number | null } | null) => ({ revision, predicted: null, measured: null, ratio, cantPredict: null })
    const trend = calibrationTrend([rev('R1', { value: 0.8, u: 0.02 }), rev('R2', null), rev('R3', { value: 0.84, u: 0.04 })] as TargetDesign['revisions'])
    expect(trend.map(t => t.revision)).toEqual(['R1', 'R3'])
    expect(trend[0]!.factor).toBeCloseTo(0.8, 12)
    // by hand: weights 2500 and 625 → (0.8·2500 + 0.84·625)/3125 = 0.808; u = 1/√3125 = 0.017889
    expect(trend[1]!.factor).toBeCloseTo(0.808, 12)
    expect(trend[1]!.u).toBeCloseTo(0.0178885, 6)
  })
})

describe('changedParameters: what a what-if sets on the next revision', () => {
  it('only numbers whose value changed, with their key, name, unit and tolerance', () => {
    const base = [p('motor_speed', 3000, 'rpm'), p('wheel_radius', 55, 'mm', 0.5), p('carrier', '6061-T6')]
    expect(changedParameters(base, { motor_speed: 3000, wheel_radius: 60 })).toEqual([p('wheel_radius', 60, 'mm', 0.5)])
    expect(changedParameters(base, { wheel_radius: Number.NaN })).toEqual([])
  })
})
