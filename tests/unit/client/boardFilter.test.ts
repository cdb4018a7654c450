import { describe, expect, it } from 'vitest'
import { NO_FILTER, matchesFilter, type BoardFilter } from '../../../utils/boardFilter'
import { makeCard } from '../../support/cards'

const card = makeCard({
  title: 'Belt slips under load',
  description: 'The drive belt squeals above 30 km/h',
  severity: 'blocks-target',
  targets: ['top-speed', 'climb'],
  seenOn: 'R3',
  fixes: [{ state: 'planned', owner: { id: 'u-ana', name: 'Ana' }, dueOn: null, landedIn: null }],
})

const f = (over: Partial<BoardFilter>): BoardFilter => ({ ...NO_FILTER, ...over })

describe('matchesFilter', () => {
  it.each([
    ['no filter', f({}), true],
    ['its severity', f({ severity: 'blocks-target' }), true],
    ['another severity', f({ severity: 'safety' }), false],
    ['one of its targets', f({ target: 'climb' }), true],
    ['a target it does not hurt', f({ target: 'range' }), false],
    ['a fix owner', f({ owner: 'u-ana' }), true],
    ['someone else', f({ owner: 'u-bo' }), false],
    ['the revision it was seen on', f({ revision: 'R3' }), true],
    ['another revision', f({ revision: 'R4' }), false],
    ['text in the title, any case', f({ text: 'BELT slips' }), true],
    ['text in the description', f({ text: ' squeals ' }), true],
    ['text found nowhere', f({ text: 'bearing' }), false],
    ['every filter passing', f({ severity: 'blocks-target', target: 'top-speed', owner: 'u-ana', revision: 'R3', text: 'belt' }), true],
    ['all but one passing', f({ severity: 'blocks-target', target: 'top-speed', owner: 'u-ana', revision: 'R3', text: 'chain' }), false],
  ] as const)('%s → %s', (_, filter, passes) => {
    expect(matchesFilter(card, filter)).toBe(passes)
  })
})
