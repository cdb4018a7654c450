import { mountSuspended } from '@nuxt/test-utils/runtime'
import { describe, expect, it } from 'vitest'
import TargetCard from '~/components/target/TargetCard.vue'
import { makeEntry, makeScoreTarget } from '../support/targets'

const M = '\u2212'

function mount(target = makeScoreTarget(), opts: { canReorder?: boolean, index?: number, count?: number } = {}) {
  return mountSuspended(TargetCard, {
    props: { target, revisions: ['R1', 'R2', 'R3'], build: 'trailhopper', canReorder: opts.canReorder ?? false, index: opts.index ?? 0, count: opts.count ?? 1 },
  })
}

const text = (w: Awaited<ReturnType<typeof mount>>, id: string) => w.get(`[data-testid="${id}"]`).text().replace(/\s+/g, ' ').trim()

describe('TargetCard', () => {
  it('shows a target with readings: threshold, latest mean with its interval, margin and status', async () => {
    const latest = makeEntry({ revision: 'R3', n: 5, mean: 24.5312, ci95: [24.4112, 24.6512] })
    const w = await mount(makeScoreTarget({ status: 'met', latest, margin: 2.2133, history: [makeEntry({ revision: 'R1', mean: 23.1 }), latest] }))
    const card = w.get('[data-testid="target-card-top-speed"]')
    expect(card.attributes('data-status')).toBe('met')
    expect(card.attributes('aria-label')).toBe('Top speed: Met')
    expect(w.get('[data-testid="target-name"]').attributes('href')).toBe('/builds/trailhopper/targets/top-speed')
    const threshold = w.get('[data-testid="target-threshold"]')
    expect(threshold.get('[aria-hidden="true"]').text()).toBe('≥ 24 km/h')
    expect(threshold.get('.sr-only').text()).toBe('Target: at least 24 km/h')
    expect(text(w, 'target-mean')).toBe('24.53 ± 0.12 km/h')
    expect(w.text()).toContain('R3 · n = 5 · 95 % interval')
    expect(text(w, 'target-margin')).toBe('margin +2.2 %')
    expect(text(w, 'status-word')).toBe('Met')
    // the sparkline's words: the means by revision
    expect(w.html()).toContain('Means by revision: R1 23.1, R3 24.53 km/h')
  })

  it('shows a target without readings as untested', async () => {
    const w = await mount()
    expect(text(w, 'target-mean')).toBe('—')
    expect(w.text()).toContain('No reading yet')
    expect(text(w, 'target-margin')).toBe('margin —')
    expect(text(w, 'status-word')).toBe('Untested')
    expect(w.find('[data-testid="forecast-note"]').exists()).toBe(false)
  })

  it('shows a band, a stretch goal and a shortfall', async () => {
    const latest = makeEntry({ revision: 'R2', status: 'short', mean: 4.61, ci95: [4.51, 4.71] })
    const w = await mount(makeScoreTarget({ key: 'mass', name: 'Mass', unit: 'kg', comparator: 'between', threshold: 4, thresholdHigh: 4.5, stretch: 4.2, status: 'short', latest, margin: -2.4444 }))
    const threshold = w.get('[data-testid="target-threshold"]')
    expect(threshold.get('[aria-hidden="true"]').text()).toBe('4–4.5 kg')
    expect(threshold.get('.sr-only').text()).toBe('Target: between 4 and 4.5 kg')
    expect(threshold.get('.muted').text()).toBe('· stretch 4.2')
    expect(text(w, 'target-margin')).toBe(`margin ${M}2.4 %`)
    expect(w.get('[data-testid="target-margin"]').classes()).toContain('text-status-short')
  })

  it('says a derived target is computed from its inputs, or why it cannot be yet', async () => {
    const derived = { derived: true, formula: 'range / mass' }
    const w = await mount(makeScoreTarget({ ...derived, status: 'met', latest: makeEntry({ revision: 'R2', n: 0, readings: 0 }) }))
    expect(w.text()).toContain('R2 · from its inputs')
    const waiting = await mount(makeScoreTarget({ ...derived, cantEvaluate: [{ revision: 'R2', reason: 'mass has no reading on R2' }] }))
    expect(waiting.text()).toContain('Can\'t evaluate yet')
  })

  it('shows the forecast for a target not yet met, and the caution for one that can hurt', async () => {
    const w = await mount(makeScoreTarget({
      status: 'marginal',
      latest: makeEntry({ revision: 'R3', status: 'marginal', mean: 23.9, ci95: [23.7, 24.1] }),
      forecast: { status: 'converging', n: 3, slope: 0.4, crossesAfterLast: 1, crossesAt: 'R4', line: [], caveat: 'a straight line through 3 points' },
      caution: true,
      quantity: 'voltage',
    }))
    expect(text(w, 'forecast-note')).toContain('Forecast: meets it at R4')
    expect(text(w, 'caution')).toBe('Caution: Voltage can shock; mains and high voltage can kill. Guard the test and follow local codes and licensed practice.')
    // a met target needs no forecast
    const met = await mount(makeScoreTarget({ status: 'met', latest: makeEntry(), forecast: { status: 'already-met', n: 3, slope: 0.1, crossesAfterLast: null, crossesAt: null, line: [], caveat: '' } }))
    expect(met.find('[data-testid="forecast-note"]').exists()).toBe(false)
  })

  it('offers moving left and right only where there is room, and emits the direction', async () => {
    const first = await mount(makeScoreTarget(), { canReorder: true, index: 0, count: 3 })
    expect(first.get('[data-move="-1"]').attributes('disabled')).toBeDefined()
    expect(first.get('[data-move="1"]').attributes('disabled')).toBeUndefined()
    await first.get('[data-move="1"]').trigger('click')
    await first.get('[data-move="-1"]').trigger('click')
    expect(first.emitted('move')).toEqual([[1]])

    const last = await mount(makeScoreTarget(), { canReorder: true, index: 2, count: 3 })
    await last.get('[data-move="-1"]').trigger('click')
    expect(last.emitted('move')).toEqual([[-1]])
    expect(last.get('[data-move="1"]').attributes('disabled')).toBeDefined()

    const reader = await mount(makeScoreTarget(), { canReorder: false, index: 1, count: 3 })
    expect(reader.find('[data-move="1"]').exists()).toBe(false)
  })
})
