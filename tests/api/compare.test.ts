import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { addReading, expectRelClose, newRevision, newTarget } from '../support/measure'

// Comparing revisions: any A against any B (Welch's test between the two pooled cells), a
// revision against its parent, and the revisions ranked by how they moved a target.
//
// Sample sets of the worked examples of the Wikipedia article "Welch's t-test" (section Examples),
// as published by Rosetta Code, task "Welch's t-test", with R's two-sided p: 0.021378 for
// example 1 (A1 vs A2) and 0.148842 for example 2 (A3 vs A4); the same sets, and the check of
// those values, as in tests/unit/readingStats.test.ts.
const A1 = [27.5, 21.0, 19.0, 23.6, 17.0, 17.9, 16.9, 20.1, 21.9, 22.6, 23.1, 19.6, 19.0, 21.7, 21.4]
const A2 = [27.1, 22.0, 20.8, 23.4, 23.4, 23.5, 25.8, 22.0, 24.8, 20.2, 21.9, 22.1, 22.9, 20.5, 24.4]
const A3 = [17.2, 20.9, 22.6, 18.1, 21.7, 21.4, 23.5, 24.2, 14.7, 21.8]
const A4 = [21.5, 22.8, 21.0, 23.0, 21.6, 23.6, 22.5, 20.7, 23.4, 21.8, 20.7, 21.7, 21.5, 22.5, 23.6, 21.5, 22.5, 23.5, 21.5, 21.8]
const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length

describe('comparing revisions', () => {
  let w: World
  let slug: string
  let buildId: string

  beforeAll(async () => {
    w = await makeWorld()
    const c = w.engineer.client
    const b = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Compared' })).body
    slug = b.slug
    buildId = b.id
    for (const key of ['gain', 'slip', 'steady', 'late']) await newTarget(c, slug, { key, name: key, unit: 'N', comparator: 'atLeast', threshold: 20 })
    await newTarget(c, slug, { key: 'gain_twice', name: 'Twice the gain', unit: 'N', comparator: 'atLeast', threshold: 40, formula: 'gain * 2' })
    await newRevision(c, slug, 'R1', { parameters: [{ name: 'Gear ratio', value: 1 }, { name: 'Current limit', value: 35, unit: 'A' }, { name: 'Carrier', value: 'steel' }] })
    await newRevision(c, slug, 'R2', { parent: 'R1', parameters: [{ name: 'Gear ratio', value: 1 }] })
    // R3 branches from R1, not from R2
    await newRevision(c, slug, 'R3', { parent: 'R1', parameters: [{ name: 'Gear ratio', value: 1.4 }, { name: 'Current limit', value: 35, unit: 'A' }, { name: 'Ramp', value: 150, unit: 'ms' }] })
    await newRevision(c, slug, 'R4', { parent: 'R2' })
    const read = (revision: string, target: string, values: number[]) => addReading(c, slug, { revision, target, values, unit: 'N' })
    await read('R1', 'gain', A1)
    await read('R1', 'slip', A2)
    await read('R1', 'steady', A3)
    // R2, between them in order, holds other values: a comparison of R1 and R3 must not use them
    await read('R2', 'gain', A1.map(x => x + 100))
    // R3's gain in two readings: pooled into one sample set
    await read('R3', 'gain', A2.slice(0, 7))
    await read('R3', 'gain', A2.slice(7))
    await read('R3', 'slip', A1)
    await read('R3', 'steady', A4)
    await read('R3', 'late', [21, 22, 23])
    await read('R4', 'slip', A2)
  })
  afterAll(closeTestDb)

  const compare = (a: string, b: string, client = w.reviewer.client, build = slug) => client.get(`/api/v1/builds/${build}/compare?a=${encodeURIComponent(a)}&b=${encodeURIComponent(b)}`)
  const row = (body: any, key: string) => body.targets.find((t: { target: { key: string } }) => t.target.key === key)

  it('R1 → R3: Welch between the two pooled cells, both directions of movement (p = 0.021), and a steady one (p = 0.149)', async () => {
    const res = await compare('R1', 'R3')
    expect(res.status).toBe(200)
    expect(res.body.a.label).toBe('R1')
    expect(res.body.b.label).toBe('R3')
    const gain = row(res.body, 'gain')
    expect(gain).toMatchObject({ movement: 'gained', real: true, reason: 'welch' })
    expect(gain.p).toBeCloseTo(0.021, 3)
    expectRelClose(gain.delta, mean(A2) - mean(A1), 1e-12)
    expect(gain.a).toMatchObject({ n: 15, readings: 1 })
    expect(gain.b).toMatchObject({ n: 15, readings: 2 })
    const slip = row(res.body, 'slip')
    expect(slip).toMatchObject({ movement: 'slipped', real: true, reason: 'welch' })
    expect(slip.p).toBeCloseTo(0.021, 3)
    const steady = row(res.body, 'steady')
    expect(steady).toMatchObject({ movement: 'steady', real: false, reason: 'welch' })
    expect(steady.p).toBeCloseTo(0.149, 3)
  })

  it('R3 → R1 turns each movement round', async () => {
    const body = (await compare('R3', 'R1')).body
    expect(row(body, 'gain')).toMatchObject({ movement: 'slipped', real: true })
    expect(row(body, 'slip')).toMatchObject({ movement: 'gained', real: true })
    expectRelClose(row(body, 'gain').delta, mean(A1) - mean(A2), 1e-12)
  })

  it('a target without a reading on one side says so; a derived one is judged by 2·√(u₁² + u₂²)', async () => {
    const body = (await compare('R1', 'R3')).body
    expect(row(body, 'late')).toMatchObject({ a: null, delta: null, movement: null, note: 'R1 has no reading of this target' })
    const twice = row(body, 'gain_twice')
    expect(twice.target).toMatchObject({ derived: true, formula: 'gain * 2' })
    expectRelClose(twice.a.mean, 2 * mean(A1), 1e-12)
    expectRelClose(twice.b.mean, 2 * mean(A2), 1e-12)
    const real = Math.abs(twice.b.mean - twice.a.mean) > 2 * Math.hypot(twice.a.u, twice.b.u)
    expect(twice).toMatchObject({ reason: 'uncertainty', p: null, real })
  })

  it('shows the effective design parameters side by side by key, marking what differs', async () => {
    const { parameters } = (await compare('R1', 'R3')).body
    const side = (value: number | string, unit: string | null, inherited = false) => ({ value, unit, tolerance: null, inherited })
    expect(parameters).toEqual([
      { key: 'gear_ratio', name: 'Gear ratio', a: side(1, null), b: side(1.4, null), differs: true },
      { key: 'current_limit', name: 'Current limit', a: side(35, 'A'), b: side(35, 'A'), differs: false },
      // R3 doesn't set the carrier: it inherits R1's
      { key: 'carrier', name: 'Carrier', a: side('steel', null), b: side('steel', null, true), differs: false },
      { key: 'ramp', name: 'Ramp', a: null, b: side(150, 'ms'), differs: true },
    ])
  })

  it('a revision of another build is a 404, like one that doesn\'t exist; a missing choice is a 400', async () => {
    const other = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Other build' })).body.slug
    await newRevision(w.engineer.client, other, 'X1')
    expect((await compare('X1', 'R1')).status).toBe(404)
    expect((await compare('R1', 'X1')).status).toBe(404)
    expect((await compare('R1', 'R99')).status).toBe(404)
    // the other team's build and revisions are not visible at all
    await newRevision(w.outsider.client, w.foreignBuild.slug, 'R1')
    expect((await compare('R1', 'R1', w.owner.client, w.foreignBuild.slug)).status).toBe(404)
    expect((await compare('R1', 'R3', w.outsider.client)).status).toBe(404)
    const missing = await w.reviewer.client.get(`/api/v1/builds/${slug}/compare?a=R1`)
    expect(missing.status).toBe(400)
    expect(missing.body.message).toMatch(/^b: /)
  })

  it('a revision\'s page shows what it moved against its parent, not the revision before it in order', async () => {
    const r3 = (await w.reviewer.client.get(`/api/v1/builds/${slug}/revisions/R3`)).body
    expect(r3.moved.a.label).toBe('R1')
    expect(r3.moved.b.label).toBe('R3')
    const gain = row(r3.moved, 'gain')
    // against its parent R1: A1 → A2, gained; the cached movement compares with R2 (A1 + 100): slipped
    expect(gain).toMatchObject({ movement: 'gained', real: true })
    expectRelClose(gain.delta, mean(A2) - mean(A1), 1e-12)
    expect(r3.targets.find((t: { key: string }) => t.key === 'gain').stats).toMatchObject({ movement: 'slipped' })
    // real movements first
    const order = r3.moved.targets.map((t: { real: boolean | null }) => t.real === true)
    expect(order).toEqual([...order].sort((x: boolean, y: boolean) => Number(y) - Number(x)))
  })

  it('when the parent lacks a reading of a target, the page says so', async () => {
    const r4 = (await w.reviewer.client.get(`/api/v1/builds/${slug}/revisions/R4`)).body
    expect(r4.moved.a.label).toBe('R2')
    expect(row(r4.moved, 'slip')).toMatchObject({ a: null, movement: null, note: 'R2 has no reading of this target' })
    const r1 = (await w.reviewer.client.get(`/api/v1/builds/${slug}/revisions/R1`)).body
    expect(r1.moved).toBeNull()
  })

  it('a target\'s page ranks the revisions by real movement, with their changes and the fixes that landed in them', async () => {
    const finding = await w.engineer.client.post(`/api/v1/builds/${slug}/findings`, { title: 'Gain too low', severity: 'blocks-target', targets: ['gain'] })
    expect(finding.status).toBe(201)
    const r3 = await testDb()('revisions').where({ build_id: buildId, label: 'R3' }).first('id')
    await testDb()('fixes').insert({ finding_id: finding.body.id, description: 'Stiffer spring', state: 'landed', landed_revision_id: r3.id })

    const detail = (await w.reviewer.client.get(`/api/v1/builds/${slug}/targets/gain`)).body
    // gain: R1 A1, R2 A1 + 100 (a real rise), R3 A2 (a real fall from R2)
    expect(detail.movers.map((m: { revision: string }) => m.revision)).toEqual(['R2', 'R3', 'R1'])
    expect(detail.movers[0]).toMatchObject({ movement: 'gained', real: true, parent: 'R1' })
    expect(detail.movers[1]).toMatchObject({ movement: 'slipped', real: true, fixes: [{ description: 'Stiffer spring', revision: 'R3', targets: ['gain'], finding: { title: 'Gain too low' } }] })
    expect(detail.movers[2]).toMatchObject({ movement: null })
    expect(detail.revisions).toEqual(['R1', 'R2', 'R3', 'R4'])
    const page = (await w.reviewer.client.get(`/api/v1/builds/${slug}/revisions/R3`)).body
    expect(page.fixesLanded.map((f: { description: string }) => f.description)).toEqual(['Stiffer spring'])
  })
})
