import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, type World } from '../support/api'
import { addReading, expectRelClose, newRevision, newTarget } from '../support/measure'

// Samples of the worked examples of the Wikipedia article "Welch's t-test" (section Examples), as
// published by Rosetta Code, task "Welch's t-test", with R's two-sided p: 0.021378 for example 1
// (A1 vs A2) and 0.148842 for example 2 (A3 vs A4); see tests/unit/readingStats.test.ts.
const A1 = [27.5, 21.0, 19.0, 23.6, 17.0, 17.9, 16.9, 20.1, 21.9, 22.6, 23.1, 19.6, 19.0, 21.7, 21.4]
const A2 = [27.1, 22.0, 20.8, 23.4, 23.4, 23.5, 25.8, 22.0, 24.8, 20.2, 21.9, 22.1, 22.9, 20.5, 24.4]
const A3 = [17.2, 20.9, 22.6, 18.1, 21.7, 21.4, 23.5, 24.2, 14.7, 21.8]
const A4 = [21.5, 22.8, 21.0, 23.0, 21.6, 23.6, 22.5, 20.7, 23.4, 21.8, 20.7, 21.7, 21.5, 22.5, 23.6, 21.5, 22.5, 23.5, 21.5, 21.8]
const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length

function queriesOf(res: { headers: Headers }): number {
  const m = /queries=(\d+)/.exec(res.headers.get('server-timing') ?? '')
  if (!m) throw new Error('no Server-Timing query count')
  return Number(m[1])
}

describe('GET /api/v1/builds/:build/scoreboard', () => {
  let w: World
  let slug: string
  let board: any
  beforeAll(async () => {
    w = await makeWorld()
    const c = w.engineer.client
    slug = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Scoreboard test' })).body.slug
    await newTarget(c, slug, { key: 'gain', name: 'Gains', unit: 'N', comparator: 'atLeast', threshold: 20, stretch: 25 })
    await newTarget(c, slug, { key: 'slip', name: 'Slips', unit: 'N', comparator: 'atLeast', threshold: 20 })
    await newTarget(c, slug, { key: 'steady', name: 'Holds', unit: 'N', comparator: 'atLeast', threshold: 20 })
    await newTarget(c, slug, { key: 'temp', name: 'Case temperature', unit: 'degF', comparator: 'atMost', threshold: 176 })
    await newTarget(c, slug, { key: 'untested', name: 'Not measured yet', unit: 'A', comparator: 'atMost', threshold: 30 })
    for (const label of ['R1', 'R2', 'R3']) await newRevision(c, slug, label)
    const read = (revision: string, target: string, values: number[], unit = 'N') => addReading(c, slug, { revision, target, values, unit })
    await read('R1', 'gain', A1)
    await read('R2', 'gain', A2)
    await read('R1', 'slip', A2)
    await read('R2', 'slip', A1)
    await read('R1', 'steady', A3)
    await read('R2', 'steady', A4)
    await read('R1', 'temp', [70.0, 70.5, 69.5], '°C')
    board = (await w.reviewer.client.get(`/api/v1/builds/${slug}/scoreboard`)).body
  })
  afterAll(closeTestDb)

  const target = (key: string) => board.targets.find((t: { key: string }) => t.key === key)

  it('answers with the contract’s fields; every revision, oldest first', () => {
    expect(board.build).toMatchObject({ slug, name: 'Scoreboard test', archived: false })
    expect(board.revisions).toEqual(['R1', 'R2', 'R3'])
    expect(board.revisionInfo.map((r: { label: string, frozen: boolean }) => [r.label, r.frozen])).toEqual([['R1', false], ['R2', false], ['R3', false]])
    expect(board.targets.map((t: { key: string }) => t.key)).toEqual(['gain', 'slip', 'steady', 'temp', 'untested'])
    for (const t of board.targets) {
      expect(Object.keys(t)).toEqual(expect.arrayContaining([
        'key', 'name', 'unit', 'comparator', 'threshold', 'thresholdHigh', 'stretch', 'status', 'latest', 'history',
        'id', 'quantity', 'quantityLabel', 'noiseBand', 'notes', 'position', 'margin', 'caution',
      ]))
      for (const h of t.history) {
        expect(Object.keys(h)).toEqual(expect.arrayContaining(['revision', 'n', 'mean', 'sd', 'u', 'ci95', 'delta', 'p', 'movement', 'status', 'real', 'reason']))
      }
    }
  })

  it('has one history entry per revision with readings; the first has nothing to compare with', () => {
    const gain = target('gain')
    expect(gain.history.map((h: { revision: string }) => h.revision)).toEqual(['R1', 'R2'])
    expect(gain.history[0]).toMatchObject({ revision: 'R1', n: 15, delta: null, p: null, movement: null, real: null })
    expect(gain.latest).toEqual(gain.history[1])
    expect(gain.status).toBe(gain.latest.status)
  })

  it('Gained: a real rise on an at-least target (Welch p = 0.021)', () => {
    const h = target('gain').latest
    expect(h).toMatchObject({ movement: 'gained', real: true, reason: 'welch' })
    expect(h.p).toBeCloseTo(0.021, 3)
    expect(h.delta).toBeCloseTo(mean(A2) - mean(A1), 12)
  })

  it('Slipped: the same change the other way', () => {
    const h = target('slip').latest
    expect(h).toMatchObject({ movement: 'slipped', real: true, reason: 'welch' })
    expect(h.p).toBeCloseTo(0.021, 3)
    expect(h.delta).toBeCloseTo(mean(A1) - mean(A2), 12)
  })

  it('Steady: a difference inside the scatter (Welch p = 0.149)', () => {
    const h = target('steady').latest
    expect(h).toMatchObject({ movement: 'steady', real: false, reason: 'welch' })
    expect(h.p).toBeCloseTo(0.149, 3)
  })

  it('status and margin come from the latest entry, in the display unit', () => {
    const gain = target('gain')
    // mean(A2) = 22.98 N, its interval lies above 20 N
    expect(gain.status).toBe('met')
    expectRelClose(gain.margin, (gain.latest.mean - 20) / 20 * 100, 1e-12)
    const temp = target('temp')
    expect(temp).toMatchObject({ unit: '°F', threshold: 176, caution: true })
    // 70 °C = 158 °F (°F = °C·1.8 + 32, NIST SP 811 B.8); spreads scale by 1.8 only
    expectRelClose(temp.latest.mean, 158, 1e-12)
    expectRelClose(temp.latest.sd, 0.5 * 1.8, 1e-9)
    expect(temp.status).toBe('met')
    expectRelClose(temp.margin, (176 - 158) / 176 * 100, 1e-9)
  })

  it('a target without readings is Untested', () => {
    expect(target('untested')).toMatchObject({ status: 'untested', latest: null, margin: null, history: [], caution: true })
  })

  it('a rig token reads its own build’s scoreboard; another build’s token gets 404', async () => {
    const own = new Client()
    own.bearer = w.ownToken
    expect((await own.get(`/api/v1/builds/${w.build.slug}/scoreboard`)).status).toBe(200)
    const foreign = new Client()
    foreign.bearer = w.foreignToken
    expect((await foreign.get(`/api/v1/builds/${slug}/scoreboard`)).status).toBe(404)
    expect((await w.outsider.client.get(`/api/v1/builds/${slug}/scoreboard`)).status).toBe(404)
  })

  it('a fixed number of SQL queries, whatever the size of the build', async () => {
    const small = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Small board' })).body.slug
    const empty = await w.reviewer.client.get(`/api/v1/builds/${small}/scoreboard`)
    await newTarget(w.engineer.client, small, { key: 'only' })
    await newRevision(w.engineer.client, small, 'R1')
    await addReading(w.engineer.client, small, { revision: 'R1', target: 'only', values: [11, 12], unit: 'N' })
    const one = await w.reviewer.client.get(`/api/v1/builds/${small}/scoreboard`)
    const big = await w.reviewer.client.get(`/api/v1/builds/${slug}/scoreboard`)
    expect(queriesOf(empty)).toBeGreaterThan(0)
    expect(queriesOf(one)).toBe(queriesOf(empty))
    expect(queriesOf(big)).toBe(queriesOf(empty))
  })

  it('reflects a new reading at once (the cache is written with the reading)', async () => {
    await addReading(w.engineer.client, slug, { revision: 'R3', target: 'gain', values: A2.map(x => x + 10), unit: 'N' })
    const after = (await w.reviewer.client.get(`/api/v1/builds/${slug}/scoreboard`)).body
    const gain = after.targets.find((t: { key: string }) => t.key === 'gain')
    expect(gain.history.map((h: { revision: string }) => h.revision)).toEqual(['R1', 'R2', 'R3'])
    expect(gain.latest).toMatchObject({ revision: 'R3', movement: 'gained' })
    expect(gain.latest.delta).toBeCloseTo(10, 12)
  })
})
