import { describe, expect, it } from 'vitest'
import { describeFindingEvent } from '../../../utils/findingEvents'

describe('describeFindingEvent', () => {
  it.each([
    ['created', { severity: 'safety', seenOn: 'R2' }, 'filed it as Safety, seen on R2'],
    ['created', { severity: 'cosmetic' }, 'filed it as Cosmetic'],
    ['moved', { from: 'spotted', to: 'bench' }, 'moved it from Spotted to On the bench'],
    ['moved', { from: 'retest', to: 'closed', verifiedBy: 'R4' }, 'moved it from Retest to Closed, verified by the readings of R4'],
    ['edited', { title: { edited: true } }, 'edited the title'],
    ['edited', { severity: { from: 'degrades', to: 'blocks-target' }, seenOn: { from: null, to: 'R3' } }, 'severity Degrades → Blocks a target; seen on none → R3'],
    ['edited', { targets: { added: ['climb'], removed: ['range', 'mass'] } }, 'targets: added climb; removed range, mass'],
    ['fix-added', { description: 'Tension the belt', owner: 'Ana', landedIn: null }, 'added the fix “Tension the belt” for Ana'],
    ['fix-added', { description: 'Wider pulley', owner: null, landedIn: 'R5' }, 'added the fix “Wider pulley”, landed in R5'],
    ['fix-edited', { description: 'Wider pulley', changes: { state: { from: 'planned', to: 'landed' }, dueOn: { from: '2026-04-01', to: '' } } }, 'changed the fix “Wider pulley”: state planned → landed; due date 2026-04-01 → none'],
  ] as const)('%s %j', (kind, detail, text) => {
    expect(describeFindingEvent({ kind, detail })).toBe(text)
  })
})
