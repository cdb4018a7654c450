import { describe, expect, it } from 'vitest'
import { boardOrder } from '#shared/utils/lanes'
import { compareRanks } from '#shared/utils/rank'
import { boardSlot, guessRank } from '../../../utils/boardSlot'
import { makeCard } from '../../support/cards'

// The board moves a card at once and sends the server its neighbours (the slot); the rank it
// guesses must put the card where it was dropped, as the server's own rank will.

const a = makeCard({ title: 'A', rank: 'a0' })
const b = makeCard({ title: 'B', rank: 'a1' })
const c = makeCard({ title: 'C', rank: 'a2' })
// ranks are unique in a lane, whatever the severity; safety cards' ranks interleave the others'
const s1 = makeCard({ title: 'S1', rank: 'a0V', severity: 'safety' })
const s2 = makeCard({ title: 'S2', rank: 'a3', severity: 'safety' })
const x = makeCard({ title: 'X', rank: 'a5' })
const sx = makeCard({ title: 'SX', rank: 'a6', severity: 'safety' })

describe('boardSlot: the neighbours of a dropped card', () => {
  it.each([
    ['between two cards', [a, x, b], x, { before: b.id }],
    ['at the top', [x, a, b], x, { before: a.id }],
    ['at the bottom', [a, b, x], x, { after: b.id }],
    ['alone in the lane', [x], x, {}],
    // safety findings sit first: a card dropped among them lands at the top of its own group
    ['an ordinary card among safety ones', [s1, x, s2, a, b], x, { before: a.id }],
    ['an ordinary card above every safety one', [x, s1, s2, a], x, { before: a.id }],
    ['an ordinary card below ordinary ones', [s1, a, x], x, { after: a.id }],
    // … and a safety card dropped among the others lands at the end of the safety group
    ['a safety card among ordinary ones', [s1, a, sx, b], sx, { after: s1.id }],
    ['a safety card above the safety ones', [sx, s1, s2, a], sx, { before: s1.id }],
    ['the only safety card', [a, sx, b], sx, {}],
  ] as const)('%s', (_, shown, card, slot) => {
    expect(boardSlot(shown, card.id)).toEqual(slot)
  })

  it('gives no slot for a card that is not in the list', () => {
    expect(boardSlot([a, b], x.id)).toEqual({})
  })
})

describe('guessRank: the rank the server will give the card', () => {
  // expected ranks follow rankBetween's cases in tests/unit/rank.test.ts
  it.each([
    ['an empty lane', [], {}, 'a0'],
    ['the end of a lane', [a, b], {}, 'a2'],
    ['above the first', [a, b], { before: a.id }, 'Zz'],
    ['between two', [a, b], { before: b.id }, 'a0V'],
    ['after the first', [a, b], { after: a.id }, 'a0V'],
    ['after the last', [a, b], { after: b.id }, 'a2'],
    ['the lane in any order', [c, a, b], { before: c.id }, 'a1V'],
    // a neighbour that left the lane meanwhile: the end, as the server does
    ['a neighbour no longer there', [a, b], { before: x.id }, 'a2'],
  ] as const)('%s', (_, lane, slot, rank) => {
    expect(guessRank(lane, slot)).toBe(rank)
  })

  it('falls back to the last rank when the neighbours leave no room (the server will respread)', () => {
    const twin = makeCard({ rank: 'a0' })
    expect(guessRank([a, twin], { before: twin.id })).toBe('a0')
  })

  // Dropping each card of a lane at each place: the guessed rank sorts it to where it was dropped.
  it('puts every dropped card where it was dropped', () => {
    const lane = [s1, s2, a, b, c]
    for (const moving of lane) {
      const rest = lane.filter(k => k !== moving)
      for (let at = 0; at <= rest.length; at++) {
        const shown = [...rest.slice(0, at), moving, ...rest.slice(at)]
        const rank = guessRank(rest, boardSlot(shown, moving.id))
        const after = boardOrder([...rest, { ...moving, rank }]).map(k => k.id)
        // the card's own group keeps the dropped order; safety ones still come first
        const expected = boardOrder(shown.map((k, i) => ({ ...k, rank: `a${i}` }))).map(k => k.id)
        expect(after, `${moving.title} dropped at ${at}`).toEqual(expected)
        for (const other of rest) expect(compareRanks(rank, other.rank)).not.toBe(0)
      }
    }
  })
})
