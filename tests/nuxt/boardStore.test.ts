import { createPinia, setActivePinia } from 'pinia'
import { beforeEach, describe, expect, it } from 'vitest'
import { useBoardStore } from '~/stores/board'
import { makeCard } from '../support/cards'

// The board store's reading side: lanes in display order and a card's place in words (what the
// live region announces after a move). Moves themselves go to the server: see tests/browser/board.

const a = makeCard({ title: 'A', lane: 'traced', rank: 'a1' })
const b = makeCard({ title: 'B', lane: 'traced', rank: 'a0' })
const s = makeCard({ title: 'S', lane: 'traced', rank: 'a2', severity: 'safety' })
const other = makeCard({ title: 'O', lane: 'bench', rank: 'a0' })

describe('useBoardStore', () => {
  beforeEach(() => {
    setActivePinia(createPinia())
    const store = useBoardStore()
    store.boards.trailhopper = {
      build: { id: 'b1', slug: 'trailhopper', name: 'Trailhopper' },
      role: 'engineer',
      findings: [a, b, s, other].map(c => ({ ...c })),
      members: [],
      targets: [],
      revisions: ['R1'],
    }
  })

  it('lists a lane safety first, then by rank', () => {
    const store = useBoardStore()
    expect(store.lane('trailhopper', 'traced').map(c => c.title)).toEqual(['S', 'B', 'A'])
    expect(store.lane('trailhopper', 'bench').map(c => c.title)).toEqual(['O'])
    expect(store.lane('trailhopper', 'closed')).toEqual([])
    expect(store.lane('no-such-build', 'traced')).toEqual([])
  })

  it('says where a card is', () => {
    const store = useBoardStore()
    expect(store.position('trailhopper', a.id)).toBe('Traced, 3 of 3')
    expect(store.position('trailhopper', s.id)).toBe('Traced, 1 of 3')
    expect(store.position('trailhopper', other.id)).toBe('On the bench, 1 of 1')
    expect(store.position('trailhopper', 'gone')).toBe('')
  })

  it('takes the server\'s copy of an edited card, and forgets a dismissed refusal', () => {
    const store = useBoardStore()
    store.upsert('trailhopper', { ...a, title: 'A, retitled', fixes: [], createdAt: '', updatedAt: '' })
    expect(store.card('trailhopper', a.id)?.title).toBe('A, retitled')
    store.refusals = { [a.id]: { message: 'no', lane: 'closed', canOverride: false }, [b.id]: { message: 'no', lane: 'retest', canOverride: false } }
    store.dismissRefusal(a.id)
    expect(Object.keys(store.refusals)).toEqual([b.id])
  })
})
