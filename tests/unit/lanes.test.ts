import { describe, expect, it } from 'vitest'
import { LANES, LANE_LABELS, boardOrder, isOpenLane, laneRefusal, neighbourLane, verificationOf, type VerificationFacts } from '#shared/utils/lanes'

// The rules of the board, from the product's definitions: a finding enters Retest only with a
// landed fix, and Closed only with a reading on a later revision that shows each target it hurts
// Met there.

const R = (seq: number, cells: VerificationFacts['revisions'][number]['cells'] = {}) => ({ seq, label: `R${seq}`, cells })
const temp = { id: 't-temp', key: 'case_temp' }
const current = { id: 't-amp', key: 'peak_current' }

function facts(over: Partial<VerificationFacts>): VerificationFacts {
  return { seenOn: { seq: 2, label: 'R2' }, landedIn: [], targets: [], revisions: [], ...over }
}

describe('lanes', () => {
  it('has the product’s lanes in board order, Parked aside at the end', () => {
    expect(LANES.map(l => LANE_LABELS[l])).toEqual(['Spotted', 'Traced', 'On the bench', 'Retest', 'Closed', 'Parked'])
  })

  it.each([
    ['spotted', 1, 'traced'],
    ['traced', -1, 'spotted'],
    ['retest', 1, 'closed'],
    ['closed', 1, 'parked'],
    ['spotted', -1, null],
    ['parked', 1, null],
  ] as const)('from %s, a step of %i reaches %s', (lane, dir, expected) => {
    expect(neighbourLane(lane, dir)).toBe(expected)
  })

  it.each([
    ['spotted', true], ['traced', true], ['bench', true], ['retest', true], ['closed', false], ['parked', false],
  ] as const)('%s is open: %s', (lane, open) => {
    expect(isOpenLane(lane)).toBe(open)
  })
})

describe('boardOrder', () => {
  it('puts safety findings first and keeps rank order within each group', () => {
    const cards = [
      { id: 'a', severity: 'cosmetic', rank: 'a0' },
      { id: 'b', severity: 'safety', rank: 'a3' },
      { id: 'c', severity: 'degrades', rank: 'a1' },
      { id: 'd', severity: 'safety', rank: 'a2' },
      // byte order, not locale order: "Z" sorts before "a"
      { id: 'e', severity: 'blocks-target', rank: 'Zz' },
    ] as const
    expect(boardOrder(cards).map(c => c.id)).toEqual(['d', 'b', 'e', 'a', 'c'])
  })
})

describe('verificationOf', () => {
  it('needs a reading on a revision after the one it was seen on', () => {
    const v = verificationOf(facts({ revisions: [R(1, { x: 'met' }), R(2, { x: 'met' })] }))
    expect(v.revision).toBeNull()
    expect(v.reason).toMatch(/after R2 \(where it was seen\); there is none yet/)
    expect(verificationOf(facts({ revisions: [R(2, { x: 'met' }), R(3, { x: 'short' })] })).revision?.label).toBe('R3')
  })

  it('without a seen-on revision, any revision with a reading verifies a finding that hurts no target', () => {
    expect(verificationOf(facts({ seenOn: null, revisions: [R(1, { x: 'short' })] })).revision?.label).toBe('R1')
    expect(verificationOf(facts({ seenOn: null, revisions: [] })).revision).toBeNull()
  })

  it('ignores revisions before the one a fix landed in', () => {
    const landed = [{ seq: 4, label: 'R4' }]
    expect(verificationOf(facts({ landedIn: landed, revisions: [R(3, { x: 'met' })] })).reason).toMatch(/from R4 on \(where its fix landed\)/)
    expect(verificationOf(facts({ landedIn: landed, revisions: [R(3, { x: 'met' }), R(4, { x: 'met' })] })).revision?.label).toBe('R4')
  })

  it('needs each target the finding hurts Met on one and the same revision', () => {
    const targets = [temp, current]
    const split = facts({
      targets,
      revisions: [R(3, { 't-temp': 'met', 't-amp': 'marginal' }), R(4, { 't-temp': 'short', 't-amp': 'met' })],
    })
    const v = verificationOf(split)
    expect(v.revision).toBeNull()
    expect(v.reason).toBe('Closing needs each of case_temp, peak_current Met on one revision after R2 (where it was seen); on R4: case_temp Short')

    const both = facts({ targets, revisions: [R(3, { 't-temp': 'met', 't-amp': 'met' }), R(4, { 't-temp': 'short' })] })
    expect(verificationOf(both).revision?.label).toBe('R3')
  })

  it('names a target that was not measured on the latest revision', () => {
    const v = verificationOf(facts({ targets: [temp], revisions: [R(3, { other: 'met' })] }))
    expect(v.reason).toBe('Closing needs case_temp Met on one revision after R2 (where it was seen); on R3: case_temp not measured')
  })

  it('prefers the latest verifying revision', () => {
    const v = verificationOf(facts({ targets: [temp], revisions: [R(3, { 't-temp': 'met' }), R(5, { 't-temp': 'met' })] }))
    expect(v.revision).toEqual({ seq: 5, label: 'R5' })
  })
})

describe('laneRefusal', () => {
  const unverified = { revision: null, reason: 'Closing needs a reading' }
  const verified = { revision: { seq: 3, label: 'R3' }, reason: 'R3 has readings' }

  it.each([
    ['retest', 0, unverified, 'Retest needs a landed fix: record the revision a fix landed in first'],
    ['retest', 1, unverified, null],
    ['closed', 1, unverified, 'Closing needs a reading'],
    ['closed', 0, verified, null],
    ['traced', 0, unverified, null],
    ['parked', 0, unverified, null],
    ['bench', 0, unverified, null],
  ] as const)('into %s with %i landed fixes: %s', (lane, landedFixes, verification, expected) => {
    expect(laneRefusal(lane, { landedFixes, verification })).toBe(expected)
  })
})
