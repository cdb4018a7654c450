import { describe, expect, it } from 'vitest'
import { targetTransition, type TargetState } from '#shared/utils/targetEvents'

// The rules are docs/computation.md §Reviewer events and digests (no outside source: Ratchet's own rules).
const s = (status: TargetState['status'], revisionId = 'R2', movement: TargetState['movement'] = null, real: boolean | null = null): TargetState =>
  ({ revisionId, status, movement, real })

describe('targetTransition', () => {
  it.each([
    ['untested → met', null, s('met'), { type: 'target.met' }],
    ['short → met', s('short', 'R1'), s('met'), { type: 'target.met' }],
    ['marginal → met on the same revision', s('marginal'), s('met'), { type: 'target.met' }],
    ['met → met: nothing', s('met', 'R1'), s('met'), null],
    ['met → marginal', s('met', 'R1'), s('marginal'), { type: 'target.slipped', reasons: ['status'] }],
    ['met → short with a real slip', s('met', 'R1'), s('short', 'R2', 'slipped', true), { type: 'target.slipped', reasons: ['status', 'movement'] }],
    ['met, still met, but a real slip', s('met', 'R1'), s('met', 'R2', 'slipped', true), { type: 'target.slipped', reasons: ['movement'] }],
    ['short, still short, and a real slip', s('short', 'R1'), s('short', 'R2', 'slipped', true), { type: 'target.slipped', reasons: ['movement'] }],
    ['a slip that is not real', s('short', 'R1'), s('short', 'R2', 'slipped', false), null],
    ['the same slip re-decided', s('short', 'R2', 'slipped', true), s('short', 'R2', 'slipped', true), null],
    ['short → short gained', s('short', 'R1'), s('short', 'R2', 'gained', true), null],
    ['readings removed', s('met'), null, null],
  ])('%s', (_name, before, after, expected) => {
    expect(targetTransition(before, after)).toEqual(expected)
  })
})
