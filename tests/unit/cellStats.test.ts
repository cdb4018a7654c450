import { describe, expect, it } from 'vitest'
import { hazardOf } from '#shared/utils/caution'
import { cellInUnit, decideCells, poolCell, tidyNumber, type SiRule } from '#shared/utils/cellStats'
import { pooledStats } from '#shared/utils/readingStats'
import { targetRuleProblems } from '#shared/utils/targetSchemas'
import { diffToSI, fromSI, parseUnit, toSI } from '#shared/utils/units'

describe('poolCell', () => {
  it('is pooledStats of the readings, with the number of readings pooled', () => {
    const readings = [{ values: [1, 2, 3], resolution: 0.1 }, { values: [4, 5], resolution: null }]
    const cell = poolCell(readings)
    const s = pooledStats(readings)
    expect(cell).toEqual({ readings: 2, n: 5, mean: s.mean, sd: s.sd, uA: s.uA, uB: s.uB, u: s.u, nuEff: s.nuEff, ciLow: s.ci95![0], ciHigh: s.ci95![1] })
  })
})

describe('decideCells', () => {
  const atLeast: SiRule = { comparator: 'atLeast', threshold: 10, thresholdHigh: null, noiseBand: null }
  const cell = (values: number[]) => poolCell([{ values, resolution: null }])

  it('leaves the first cell without a movement and compares each later one with the one before', () => {
    const cells = [cell([9, 9.1, 8.9]), cell([11, 11.1, 10.9]), cell([11.02, 11.08, 10.95])]
    const [first, second, third] = decideCells(cells, atLeast)
    expect(first).toEqual({ status: 'short', delta: null, p: null, movement: null, real: null, reason: null })
    expect(second).toMatchObject({ status: 'met', movement: 'gained', real: true, reason: 'welch' })
    expect(second!.delta).toBeCloseTo(2, 12)
    expect(third).toMatchObject({ status: 'met', movement: 'steady', real: false, reason: 'welch' })
  })

  it('single samples: the noise band decides, or nothing does', () => {
    const cells = [cell([10]), cell([10.6])]
    expect(decideCells(cells, { ...atLeast, noiseBand: 0.5 })[1]).toMatchObject({ movement: 'gained', reason: 'noise-band' })
    expect(decideCells(cells, { ...atLeast, noiseBand: 1 })[1]).toMatchObject({ movement: 'steady', reason: 'noise-band' })
    expect(decideCells(cells, atLeast)[1]).toMatchObject({ movement: 'steady', reason: 'not-enough-data' })
  })

  it('decides the same in SI as in a display unit with an offset (°F)', () => {
    const degF = parseUnit('degF')
    const enteredF = [[171.2, 172.0, 171.5, 172.3], [180.1, 181.0, 180.4], [180.6, 180.2, 181.1, 180.8]]
    const ruleF: SiRule = { comparator: 'atMost', threshold: 176, thresholdHigh: null, noiseBand: 1.5 }
    const ruleSI: SiRule = { comparator: 'atMost', threshold: toSI(176, degF), thresholdHigh: null, noiseBand: diffToSI(1.5, degF) }
    const inF = decideCells(enteredF.map(cell), ruleF)
    const inSI = decideCells(enteredF.map(v => cell(v.map(x => toSI(x, degF)))), ruleSI)
    expect(inSI.map(d => [d.status, d.movement, d.reason])).toEqual(inF.map(d => [d.status, d.movement, d.reason]))
    inSI.forEach((d, i) => {
      if (d.p === null) expect(inF[i]!.p).toBeNull()
      else expect(d.p).toBeCloseTo(inF[i]!.p!, 10)
    })
    expect(inSI[1]!.movement).toBe('slipped')
  })
})

describe('cellInUnit', () => {
  it('converts the mean and interval with the offset, the spreads with the factor alone', () => {
    // 373.15 K = 100 °C = 212 °F; a difference of 1 K is 1.8 °F (NIST SP 811 (2008) B.8)
    const c = { n: 4, mean: 373.15, sd: 1, uA: 0.5, uB: null, u: 0.5, nuEff: 3, ciLow: 372.15, ciHigh: 374.15 }
    const f = cellInUnit(c, parseUnit('°F'))
    expect(f.mean).toBeCloseTo(212, 10)
    expect(f.sd).toBeCloseTo(1.8, 12)
    expect(f.u).toBeCloseTo(0.9, 12)
    expect(f.uB).toBeNull()
    expect(f.ci95![0]).toBeCloseTo(210.2, 10)
    expect(f.ci95![1]).toBeCloseTo(213.8, 10)
    expect(f.nuEff).toBe(3)
  })

  it('gives null for infinite degrees of freedom and for a missing interval', () => {
    const c = { n: 1, mean: 2, sd: null, uA: null, uB: 0.1, u: 0.1, nuEff: Infinity, ciLow: null, ciHigh: null }
    expect(cellInUnit(c, parseUnit('N'))).toMatchObject({ nuEff: null, ci95: null, sd: null })
  })
})

describe('tidyNumber', () => {
  it('gives back thresholds as they were typed after a round trip through SI', () => {
    const kmh = parseUnit('km/h')
    const degC = parseUnit('°C')
    expect(tidyNumber(fromSI(toSI(24, kmh), kmh))).toBe(24)
    expect(tidyNumber(fromSI(toSI(80, degC), degC))).toBe(80)
    expect(tidyNumber(fromSI(toSI(4.2, parseUnit('lb')), 'lb'))).toBe(4.2)
  })
})

describe('targetRuleProblems', () => {
  it.each([
    [{ comparator: 'between', threshold: 24, thresholdHigh: 25 }, {}],
    [{ comparator: 'between', threshold: 24, thresholdHigh: 24 }, {}],
    [{ comparator: 'between', threshold: 24 }, { thresholdHigh: 'A between target needs an upper threshold' }],
    [{ comparator: 'between', threshold: 24, thresholdHigh: 23 }, { thresholdHigh: 'The upper threshold must be at least the lower one' }],
    [{ comparator: 'atLeast', threshold: 40, thresholdHigh: 50 }, { thresholdHigh: 'Only a between target has an upper threshold' }],
    [{ comparator: 'atLeast', threshold: 40, stretch: 45 }, {}],
    [{ comparator: 'atLeast', threshold: 40, stretch: 35 }, { stretch: 'For an at-least target the stretch goal is at or above the threshold' }],
    [{ comparator: 'atMost', threshold: 4.2, stretch: 4.5 }, { stretch: 'For an at-most target the stretch goal is at or below the threshold' }],
    [{ comparator: 'between', threshold: 24, thresholdHigh: 25, stretch: 26 }, { stretch: 'For a between target the stretch goal lies inside the band' }],
  ] as const)('%j → %j', (rule, problems) => {
    expect(targetRuleProblems(rule)).toEqual(problems)
  })
})

describe('hazardOf', () => {
  it.each([
    ['current', 'electrical'], ['voltage', 'electrical'], ['energy', 'electrical'], ['temperature', 'thermal'],
    ['angularSpeed', 'mechanical'], ['mass', null], ['velocity', null],
  ] as const)('%s → %s', (quantity, hazard) => {
    expect(hazardOf(quantity)).toBe(hazard)
  })
})
