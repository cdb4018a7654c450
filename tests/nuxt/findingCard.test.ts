import { mountSuspended } from '@nuxt/test-utils/runtime'
import { describe, expect, it } from 'vitest'
import FindingCard from '~/components/board/FindingCard.vue'
import LaneMark from '~/components/finding/LaneMark.vue'
import SeverityMark from '~/components/finding/SeverityMark.vue'
import { LANE_LABELS, SEVERITY_LABELS, type Lane } from '#shared/utils/lanes'
import type { CardRefusal } from '~/stores/board'
import { makeCard } from '../support/cards'

type Card = ReturnType<typeof makeCard>

function mount(card: Card, opts: { canEdit?: boolean, index?: number, count?: number, refusal?: CardRefusal | null, tabStop?: boolean } = {}) {
  return mountSuspended(FindingCard, {
    props: { card, build: 'trailhopper', canEdit: opts.canEdit ?? true, index: opts.index ?? 0, count: opts.count ?? 3, refusal: opts.refusal ?? null, tabStop: opts.tabStop ?? true },
    attachTo: document.body,
  })
}

const squash = (s: string) => s.replace(/\s+/g, ' ').trim()

describe('FindingCard: what a card says', () => {
  it('names the finding, its severity and place, and links to it', async () => {
    const card = makeCard({ title: 'Belt slips under load', severity: 'blocks-target', lane: 'traced', targets: ['top-speed'], seenOn: 'R3', comments: 2 })
    const w = await mount(card, { index: 1, count: 4 })
    const article = w.get(`[data-testid="finding-card-${card.id}"]`)
    expect(article.attributes('aria-label')).toBe('Blocks a target: Belt slips under load. Traced, 2 of 4.')
    expect(article.attributes('data-lane')).toBe('traced')
    expect(w.get('[data-testid="card-title"]').attributes('href')).toBe(`/builds/trailhopper/findings/${card.id}`)
    expect(w.findAll('span.font-mono').map(t => t.text())).toEqual(['top-speed'])
    expect(squash(w.text())).toContain('seen on R3')
    expect(squash(w.text())).toContain('2 comments')
  })

  it.each([
    ['one planned fix', [{ state: 'planned', owner: { id: 'u1', name: 'Ana' }, dueOn: '2026-05-02', landedIn: null }], 'Fix planned · Ana · due 2026-05-02'],
    ['fixes, none landed', [{ state: 'in-progress', owner: { id: 'u1', name: 'Ana' }, dueOn: '2026-05-09', landedIn: null }, { state: 'planned', owner: { id: 'u2', name: 'Bo' }, dueOn: '2026-05-02', landedIn: null }], '2 fixes, none landed · Ana, Bo · due 2026-05-02'],
    ['one of two landed', [{ state: 'landed', owner: { id: 'u1', name: 'Ana' }, dueOn: null, landedIn: 'R4' }, { state: 'dropped', owner: { id: 'u2', name: 'Bo' }, dueOn: '2026-05-02', landedIn: null }], '1 of 2 fixes landed (in R4) · Ana'],
  ] as const)('sums up the fixes: %s', async (_, fixes, summary) => {
    const w = await mount(makeCard({ fixes: fixes.map(f => ({ ...f })) }))
    expect(squash(w.get('[data-testid="card-fixes"]').text())).toBe(summary)
  })

  it('says what a card in Retest waits for, or that it can close', async () => {
    const waiting = await mount(makeCard({ lane: 'retest', closeBlocker: 'a reading of top-speed on R4 or later' }))
    expect(squash(waiting.get('[data-testid="card-verification"]').text())).toBe('Waiting: a reading of top-speed on R4 or later')
    const ready = await mount(makeCard({ lane: 'retest', verifiedOn: 'R4' }))
    expect(squash(ready.get('[data-testid="card-verification"]').text())).toBe('Ready to close: verified on R4')
  })

  it('shows the caution on an open safety finding only', async () => {
    const open = await mount(makeCard({ severity: 'safety', lane: 'bench' }))
    expect(open.text()).toContain('Can hurt someone: guard the test, follow local codes and licensed practice.')
    const closed = await mount(makeCard({ severity: 'safety', lane: 'closed' }))
    expect(closed.text()).not.toContain('Can hurt someone')
  })
})

describe('FindingCard: keys and the Move menu', () => {
  it.each([
    [{ key: 'ArrowDown', altKey: true }, 'step', ['down']],
    [{ key: 'ArrowUp', altKey: true, shiftKey: true }, 'step', ['top']],
    [{ key: 'ArrowRight', altKey: true }, 'lane', ['bench']],
    [{ key: 'ArrowLeft', altKey: true }, 'lane', ['spotted']],
    [{ key: 'ArrowLeft' }, 'focusMove', ['left']],
    [{ key: 'Home' }, 'focusMove', ['first']],
    [{ key: 'End' }, 'focusMove', ['last']],
  ] as const)('%j emits %s %j', async (key, event, args) => {
    const w = await mount(makeCard({ lane: 'traced' }), { index: 1 })
    await w.get('article').trigger('keydown', key)
    expect(w.emitted(event)).toEqual([args])
  })

  it('moves nothing for a reader, who can still move the focus', async () => {
    const w = await mount(makeCard({ lane: 'traced' }), { canEdit: false, index: 1 })
    await w.get('article').trigger('keydown', { key: 'ArrowDown', altKey: true })
    await w.get('article').trigger('keydown', { key: 'ArrowRight', altKey: true })
    await w.get('article').trigger('keydown', { key: 'ArrowDown' })
    expect(w.emitted('step')).toBeUndefined()
    expect(w.emitted('lane')).toBeUndefined()
    expect(w.emitted('focusMove')).toEqual([['down']])
    expect(w.find('[data-testid="card-move-menu"]').exists()).toBe(false)
  })

  it('has no lane beyond the last: Alt+Right in Parked does nothing', async () => {
    const w = await mount(makeCard({ lane: 'parked' }))
    await w.get('article').trigger('keydown', { key: 'ArrowRight', altKey: true })
    expect(w.emitted('lane')).toBeUndefined()
  })

  it('offers steps that fit the card\'s place, the other lanes with their rule, and emits the choice', async () => {
    const w = await mount(makeCard({ lane: 'bench', closeBlocker: 'a reading on a later revision' }), { index: 0, count: 3 })
    await w.get('[data-testid="card-move-menu"]').trigger('click')
    expect(w.get('[data-testid="card-move-menu"]').attributes('aria-expanded')).toBe('true')
    // the first card can't go up
    expect(w.get('[data-testid="card-step-up"]').attributes('aria-disabled')).toBe('true')
    expect(w.get('[data-testid="card-step-top"]').attributes('aria-disabled')).toBe('true')
    expect(w.get('[data-testid="card-step-down"]').attributes('aria-disabled')).toBeUndefined()
    // every lane but its own; the server's rules hinted beforehand
    expect(w.find('[data-testid="card-to-bench"]').exists()).toBe(false)
    expect(squash(w.get('[data-testid="card-to-retest"]').text())).toContain('needs a landed fix')
    expect(squash(w.get('[data-testid="card-to-closed"]').text())).toContain('needs a verifying reading')
    await w.get('[data-testid="card-step-up"]').trigger('click')
    expect(w.emitted('step')).toBeUndefined()
    await w.get('[data-testid="card-step-bottom"]').trigger('click')
    expect(w.emitted('step')).toEqual([['bottom']])
    // choosing closes the menu
    expect(w.find('[data-testid="card-menu"]').exists()).toBe(false)
    await w.get('[data-testid="card-move-menu"]').trigger('click')
    await w.get('[data-testid="card-to-parked"]').trigger('click')
    expect(w.emitted('lane')).toEqual([['parked']])
  })

  it('shows a refused move with the server\'s reason, and the Owner\'s override', async () => {
    const refusal: CardRefusal = { message: 'A finding closes only after a reading verifies its fix', lane: 'closed', canOverride: true }
    const w = await mount(makeCard({ lane: 'retest' }), { refusal })
    expect(squash(w.get('[data-testid="card-refusal"]').text())).toContain('Not moved to Closed: A finding closes only after a reading verifies its fix')
    await w.get('[data-testid="card-override"]').trigger('click')
    expect(w.emitted('override')).toEqual([[]])
    const dismiss = w.get('[data-testid="card-refusal"]').findAll('button').find(b => b.text() === 'Dismiss')!
    await dismiss.trigger('click')
    expect(w.emitted('dismiss')).toEqual([[]])

    const engineer = await mount(makeCard({ lane: 'retest' }), { refusal: { ...refusal, canOverride: false } })
    expect(engineer.find('[data-testid="card-override"]').exists()).toBe(false)
  })

  it('is its lane\'s tab stop only when told: the other cards are reached with the arrow keys', async () => {
    const stop = await mount(makeCard({ lane: 'traced' }), { tabStop: true })
    const other = await mount(makeCard({ lane: 'traced' }), { index: 1, tabStop: false })
    expect(stop.get('article').attributes('tabindex')).toBe('0')
    expect(other.get('article').attributes('tabindex')).toBe('-1')
  })

  it('keeps the Move button inside a card that shows a comment count: the header wraps', async () => {
    const w = await mount(makeCard({ severity: 'blocks-target', comments: 12 }))
    const header = w.get('article header')
    expect(header.classes()).toContain('flex-wrap')
    expect(header.find('[data-testid="card-move-menu"]').exists()).toBe(true)
  })
})

describe('the board\'s marks: a ratchet wheel per lane, a toothed rack per severity', () => {
  it.each([
    ['spotted', 1], ['traced', 2], ['bench', 3], ['retest', 4], ['closed', 5], ['parked', 0],
  ] as const)('%s: the pawl has passed %i teeth, drawn solid', async (lane, passed) => {
    const w = await mountSuspended(LaneMark, { props: { lane } })
    const wheel = w.get('[data-testid="lane-wheel"]')
    expect(wheel.attributes('data-teeth-passed')).toBe(String(passed))
    // five teeth, the passed ones filled
    const teeth = wheel.findAll('path[stroke-linejoin="round"]').filter(p => p.element.parentElement === wheel.element)
    expect(teeth).toHaveLength(5)
    expect(teeth.filter(p => p.attributes('fill') === 'currentColor')).toHaveLength(passed)
    expect(w.text()).toBe(LANE_LABELS[lane])
  })

  it('lifts the pawl off the wheel when parked: its tip is outside the teeth', async () => {
    const tipRadius = async (lane: Lane) => {
      const w = await mountSuspended(LaneMark, { props: { lane } })
      const d = w.get('[data-testid="lane-pawl"] path').attributes('d')!
      const [x, y] = d.split('L')[1]!.split(' ').map(Number)
      return Math.hypot(x! - 10, y! - 10)
    }
    expect(await tipRadius('parked')).toBeGreaterThan(8.8)
    for (const lane of ['spotted', 'traced', 'bench', 'retest', 'closed'] as const) expect(await tipRadius(lane)).toBeLessThan(8.8)
  })

  it.each([
    ['cosmetic', 1], ['degrades', 2], ['blocks-target', 3], ['safety', 4],
  ] as const)('%s: %i teeth and the word', async (severity, teeth) => {
    const w = await mountSuspended(SeverityMark, { props: { severity } })
    const mark = w.get('[data-testid="severity-mark"]')
    expect(mark.attributes('data-teeth')).toBe(String(teeth))
    // each tooth is a rise and a straight drop: two L commands per tooth, one for the baseline's end
    expect(mark.get('path').attributes('d')!.split('L')).toHaveLength(2 * teeth + 2)
    expect(w.text()).toBe(SEVERITY_LABELS[severity])
  })
})
