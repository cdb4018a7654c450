import type { Movement, TargetStatus } from './conformance'

// When a change to a target's readings (or its rule) is worth telling reviewers about.

/** The target's current state: its cell on the latest revision that has a reading of it. */
export interface TargetState {
  revisionId: string
  status: Exclude<TargetStatus, 'untested'>
  movement: Movement | null
  real: boolean | null
}

export type SlipReason = 'status' | 'movement'

export type TargetTransition
  = | { type: 'target.met' }
    | { type: 'target.slipped', reasons: SlipReason[] }

/**
 * The event a change from `before` to `after` makes, if any:
 * - `target.met` when the target becomes Met from any other status (Untested included);
 * - `target.slipped` when it falls from Met to Marginal or Short (`status`), or when its latest
 *   revision shows a real movement in the bad direction that it did not show before (`movement`),
 *   both reasons when both hold.
 * The same state twice makes no event, so re-deciding a target never repeats one.
 */
export function targetTransition(before: TargetState | null, after: TargetState | null): TargetTransition | null {
  if (!after) return null
  const wasMet = before?.status === 'met'
  if (after.status === 'met' && !wasMet) return { type: 'target.met' }
  const reasons: SlipReason[] = []
  if (wasMet && after.status !== 'met') reasons.push('status')
  const slipsNow = after.movement === 'slipped' && after.real === true
  const slippedBefore = before !== null && before.revisionId === after.revisionId && before.movement === 'slipped' && before.real === true
  if (slipsNow && !slippedBefore) reasons.push('movement')
  return reasons.length ? { type: 'target.slipped', reasons } : null
}
