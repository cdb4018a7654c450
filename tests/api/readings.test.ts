import { createHash } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { zarr13 } from '../fixtures/strd/zarr13'
import { Client, closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { addReading, expectRefused, expectRelClose, newRevision, newTarget, uniqueKey } from '../support/measure'

// 1 mph = 1609.344 m / 3600 s exactly (international mile; NIST SP 811 (2008) B.8), 1 km/h =
// 1000 m / 3600 s, so 1 mph = 1.609344 km/h exactly. °C = (°F − 32)/1.8 (NIST SP 811 B.8);
// a temperature difference of 1 °F is 1/1.8 °C.
const MPH_IN_KMH = 1.609344

describe('readings', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  const post = (body: unknown, c = w.engineer.client) => c.post(`/api/v1/builds/${w.build.slug}/readings`, body)

  /** A target and an open revision of the world's build. */
  async function cell(target: Parameters<typeof newTarget>[2] = {}) {
    const t = await newTarget(w.engineer.client, w.build.slug, target)
    const r = await newRevision(w.engineer.client, w.build.slug, uniqueKey('R'))
    return { key: t.key, id: t.id, label: r.label, revisionId: r.id }
  }

  describe('statistics in the target’s display unit', () => {
    it('values in mph on a km/h target: the mean and spreads convert exactly', async () => {
      const c = await cell({ unit: 'km/h', comparator: 'between', threshold: 24, thresholdHigh: 25 })
      const values = [15.1, 15.2, 15.3, 15.2]
      const res = await post({ revision: c.label, target: c.key, values, unit: 'mph', method: 'GPS logger' })
      expect(res.status).toBe(201)
      const { reading } = res.body
      expect(reading).toMatchObject({ n: 4, unit: 'km/h' })
      const meanMph = 15.2
      const sdMph = Math.sqrt((0.01 + 0 + 0.01 + 0) / 3)
      expectRelClose(reading.mean, meanMph * MPH_IN_KMH, 1e-12)
      expectRelClose(reading.sd, sdMph * MPH_IN_KMH, 1e-9)
      expectRelClose(reading.u, (sdMph / 2) * MPH_IN_KMH, 1e-9)
      // 24.46 km/h ± t(0.975, 3)·u: the interval lies inside [24, 25]
      expect(reading.status).toBe('met')
      expect(res.body.pooled).toBeNull()
      const row = await testDb()('readings').where({ id: reading.id }).first()
      expect(row).toMatchObject({ unit_entered: 'mph', values_entered: values, method: 'GPS logger', taken_by: w.engineer.user.id, rig_token_id: null })
      row.values_si.forEach((v: number, i: number) => expectRelClose(v, values[i]! * 1609.344 / 3600))
    })

    it('values in °F on a °C target: the mean takes the offset, the spreads the factor only', async () => {
      const c = await cell({ unit: '°C', comparator: 'atMost', threshold: 80 })
      const res = await post({ revision: c.label, target: c.key, values: [177.8, 178, 178.2], unit: 'degF', resolution: 0.5 })
      expect(res.status).toBe(201)
      const r = res.body.reading
      expectRelClose(r.mean, (178 - 32) / 1.8, 1e-12)
      expectRelClose(r.sd, 0.2 / 1.8, 1e-9)
      expectRelClose(r.uB, 0.5 / 1.8 / Math.sqrt(12), 1e-9)
      // 81.1 °C ± 0.3 °C: the whole interval is above an at-most 80 °C threshold
      expect(r.status).toBe('short')
    })

    it('ZARR13 as one reading reproduces the e-Handbook’s 95 % limits for the mean', async () => {
      // NIST/SEMATECH e-Handbook 1.3.5.2: N = 195, mean 9.261460, sd 0.022789,
      // 95 % interval (9.258242, 9.264679)
      const c = await cell({ unit: 'count', comparator: 'atLeast', threshold: 9.25 })
      const res = await post({ revision: c.label, target: c.key, values: zarr13, unit: 'count' })
      expect(res.status).toBe(201)
      const r = res.body.reading
      expect(r.n).toBe(195)
      expect(Math.abs(r.mean - 9.261460)).toBeLessThanOrEqual(1e-6)
      expect(Math.abs(r.sd - 0.022789)).toBeLessThanOrEqual(1e-6)
      expect(Math.abs(r.ci95[0] - 9.258242)).toBeLessThanOrEqual(1e-6)
      expect(Math.abs(r.ci95[1] - 9.264679)).toBeLessThanOrEqual(1e-6)
      expect(r.nuEff).toBe(194)
      expect(r.status).toBe('met')
    })

    it('Type B from the resolution and Welch–Satterthwaite: a case worked by hand (GUM F.2.2.1, G.4.1)', async () => {
      // x = 10.0, 10.2, 10.4 N, δ = 0.5 N. mean 10.2, s = 0.2, uA² = s²/3 = 1/75,
      // uB² = δ²/12 = 1/48, u² = 1/75 + 1/48 = 41/1200, ν_eff = u⁴/(uA⁴/2) = 13.1328125 exactly.
      const c = await cell({ unit: 'N', comparator: 'atLeast', threshold: 9 })
      const res = await post({ revision: c.label, target: c.key, values: [10.0, 10.2, 10.4], unit: 'N', resolution: 0.5 })
      const r = res.body.reading
      expect(r.mean).toBeCloseTo(10.2, 12)
      expect(r.sd).toBeCloseTo(0.2, 12)
      expect(r.uA).toBeCloseTo(Math.sqrt(1 / 75), 12)
      expect(r.uB).toBeCloseTo(Math.sqrt(1 / 48), 12)
      expect(r.u).toBeCloseTo(Math.sqrt(41 / 1200), 12)
      expect(r.nuEff).toBeCloseTo(13.1328125, 9)
      // e-Handbook 1.3.6.7.2: t(0.975, 13) = 2.160, t(0.975, 14) = 2.145; ν = 13.13 lies between
      const k = (r.ci95[1] - r.mean) / r.u
      expect(k).toBeGreaterThan(2.145)
      expect(k).toBeLessThan(2.160)
      expect(r.ci95[0] - r.mean).toBeCloseTo(-(r.ci95[1] - r.mean), 12)
    })

    it('one sample with a resolution: u = uB and the normal quantile; without one: no interval', async () => {
      const c = await cell({ unit: 'N', comparator: 'atLeast', threshold: 10 })
      const one = (await post({ revision: c.label, target: c.key, values: [10.5], unit: 'N', resolution: 0.5 })).body.reading
      expect(one).toMatchObject({ n: 1, sd: null, uA: null, nuEff: null })
      expect(one.u).toBeCloseTo(0.5 / Math.sqrt(12), 12)
      // 1.959964: the two-sided 95 % normal quantile (e-Handbook 1.3.6.7.2 prints 1.960 for ν = ∞)
      expect(one.ci95[1] - 10.5).toBeCloseTo(1.959964 * 0.5 / Math.sqrt(12), 6)
      expect(one.status).toBe('met')

      const d = await cell({ unit: 'N', comparator: 'atLeast', threshold: 10 })
      const bare = (await post({ revision: d.label, target: d.key, values: [9.99], unit: 'N' })).body.reading
      expect(bare).toMatchObject({ n: 1, mean: 9.99, sd: null, u: null, ci95: null, status: 'short' })
    })

    it('pools several readings of one target on one revision into one sample set', async () => {
      const c = await cell({ unit: 'kg', comparator: 'atMost', threshold: 10 })
      const first = await post({ revision: c.label, target: c.key, values: [1, 2, 3], unit: 'kg' })
      expect(first.body.pooled).toBeNull()
      const second = await post({ revision: c.label, target: c.key, values: [4000, 5000], unit: 'g' })
      expect(second.status).toBe(201)
      expect(second.body.reading).toMatchObject({ n: 2, mean: 4.5 })
      // pooled: 1, 2, 3, 4, 5 kg → mean 3, s² = 10/4
      expect(second.body.pooled).toMatchObject({ n: 5, readings: 2 })
      expect(second.body.pooled.mean).toBeCloseTo(3, 12)
      expect(second.body.pooled.sd).toBeCloseTo(Math.sqrt(2.5), 12)
      const board = await w.reviewer.client.get(`/api/v1/builds/${w.build.slug}/scoreboard`)
      const entry = board.body.targets.find((t: { key: string }) => t.key === c.key).latest
      expect(entry).toMatchObject({ revision: c.label, readings: 2, n: 5 })
    })

    it('concurrent readings of one cell all end up in the pooled statistics', async () => {
      const c = await cell({ unit: 'N', comparator: 'atLeast', threshold: 1 })
      const results = await Promise.all(Array.from({ length: 8 }, (_, i) => post({ revision: c.label, target: c.key, values: [i, i + 1, i + 2], unit: 'N' })))
      expect(results.map(r => r.status)).toEqual(Array(8).fill(201))
      const row = await testDb()('cell_stats').where({ target_id: c.id, revision_id: c.revisionId }).first()
      expect(row).toMatchObject({ readings: 8, n: 24 })
      // values i, i+1, i+2 for i = 0..7: mean of the means (i + 1) = 4.5
      expect(row.mean).toBeCloseTo(4.5, 12)
    })
  })

  describe('bad input gets a clear 4xx and changes nothing', () => {
    let c: { key: string, label: string }
    beforeAll(async () => {
      c = await cell({ unit: 'km/h', comparator: 'atLeast', threshold: 20 })
      await post({ revision: c.label, target: c.key, values: [21, 22], unit: 'km/h' })
    })
    const json = { 'content-type': 'application/json' }
    const raw = (text: string) => () => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/readings`, text, json)
    const valid = () => ({ revision: c.label, target: c.key, values: [21, 22], unit: 'km/h' })

    it('400 for an unreadable unit', async () => {
      await expectRefused(w.build.id, 400, () => post({ ...valid(), unit: 'furlong/fortnite' }), /Unknown unit/)
    })

    it('422 for a unit of another quantity, naming both quantities', async () => {
      const res = await expectRefused(w.build.id, 422, () => post({ ...valid(), unit: 'kg' }))
      expect(res.body.message).toMatch(/mass/)
      expect(res.body.message).toMatch(/velocity/)
      expect(res.body.data.fields.unit).toBeTruthy()
    })

    it.each([
      ['NaN in the JSON text', () => raw(`{"revision":"${c.label}","target":"${c.key}","unit":"km/h","values":[1,NaN]}`)],
      ['Infinity in the JSON text', () => raw(`{"revision":"${c.label}","target":"${c.key}","unit":"km/h","values":[Infinity]}`)],
      ['1e999, which JSON reads as Infinity', () => raw(`{"revision":"${c.label}","target":"${c.key}","unit":"km/h","values":[21,1e999]}`)],
      ['a body that is not JSON', () => raw('values=1,2,3')],
    ])('400 for %s', async (_name, call) => {
      await expectRefused(w.build.id, 400, call())
    })

    it.each([
      ['numeric strings', { values: ['21', '22'] }, 'values.0'],
      ['a string among numbers', { values: [21, 'x'] }, 'values.1'],
      ['null among numbers', { values: [21, null] }, 'values.1'],
      ['an empty list', { values: [] }, 'values'],
      ['no values', { values: undefined }, 'values'],
      ['values as text', { values: '21,22' }, 'values'],
      ['10,001 values', { values: Array.from({ length: 10_001 }, (_, i) => 20 + (i % 7)) }, 'values'],
      ['a negative resolution', { resolution: -0.1 }, 'resolution'],
      ['a resolution as text', { resolution: '0.1' }, 'resolution'],
      ['a time that is not a time', { takenAt: 'yesterday' }, 'takenAt'],
      ['a time in the year 0', { takenAt: '0000-01-01T00:00:00Z' }, 'takenAt'],
      ['a NUL character in the notes', { notes: 'a\u0000b' }, 'notes'],
      ['no unit', { unit: '' }, 'unit'],
    ])('400 for %s', async (_name, change, field) => {
      const res = await expectRefused(w.build.id, 400, () => post({ ...valid(), ...change }))
      expect(Object.keys(res.body.data.fields)).toContain(field)
    })

    it('400 for values too large to convert to SI', async () => {
      const e = await cell({ unit: 'J', comparator: 'atMost', threshold: 1 })
      await expectRefused(w.build.id, 400, () => post({ revision: e.label, target: e.key, values: [1e308], unit: 'kWh' }), /too large/)
    })

    it('422 naming the values when the cell’s pooled statistics would overflow double precision', async () => {
      // [11, 12] mm at 0.1 mm, then [1e308] mm: each converts to SI (1e305 m), but the pooled
      // deviations square past the largest double, 1.797e308 (IEEE 754 binary64)
      const o = await cell({ unit: 'mm', comparator: 'atMost', threshold: 20 })
      expect((await post({ revision: o.label, target: o.key, values: [11, 12], unit: 'mm', resolution: 0.1 })).status).toBe(201)
      const res = await expectRefused(w.build.id, 422, () => post({ revision: o.label, target: o.key, values: [1e308], unit: 'mm' }), /^values: .*would overflow/)
      expect(Object.keys(res.body.data.fields)).toEqual(['values'])
      // a single reading whose own spread overflows, and one far from the previous revision's mean
      await expectRefused(w.build.id, 422, () => post({ revision: o.label, target: o.key, values: [1.7e308, -1.7e308], unit: 'mm' }), /^values: /)
      const m = await cell({ unit: 'm', comparator: 'atMost', threshold: 20 })
      expect((await post({ revision: m.label, target: m.key, values: [-1.7e308], unit: 'm' })).status).toBe(201)
      const next = await newRevision(w.engineer.client, w.build.slug, uniqueKey('R'))
      await expectRefused(w.build.id, 422, () => post({ revision: next.label, target: m.key, values: [1.7e308], unit: 'm' }), /^values: .*between the revisions/)
    })

    it('10,000 values are accepted; a cell pools at most 10,000 (409 beyond)', async () => {
      const f = await cell({ unit: 'km/h' })
      const res = await post({ revision: f.label, target: f.key, unit: 'km/h', values: Array.from({ length: 9_999 }, (_, i) => 20 + (i % 7)) })
      expect(res.status).toBe(201)
      expect(res.body.reading.n).toBe(9_999)
      await expectRefused(w.build.id, 409, () => post({ revision: f.label, target: f.key, unit: 'km/h', values: [20, 21] }), /at most 10,000/)
      expect((await post({ revision: f.label, target: f.key, unit: 'km/h', values: [20] })).status).toBe(201)
      const g = await cell({ unit: 'km/h' })
      const full = await post({ revision: g.label, target: g.key, unit: 'km/h', values: Array.from({ length: 10_000 }, (_, i) => 20 + (i % 7)) })
      expect(full.body.reading.n).toBe(10_000)
    })

    it('409 for a frozen revision', async () => {
      const f = await cell({ unit: 'N' })
      await w.reviewer.client.post(`/api/v1/builds/${w.build.slug}/revisions/${f.label}/freeze`)
      await expectRefused(w.build.id, 409, () => post({ revision: f.label, target: f.key, values: [1], unit: 'N' }), /frozen/)
    })

    it('404 for a target or a revision of another build, or none at all', async () => {
      const theirs = await newTarget(w.outsider.client, w.foreignBuild.slug)
      const theirRev = await newRevision(w.outsider.client, w.foreignBuild.slug, uniqueKey('THEIRS'))
      await expectRefused(w.build.id, 404, () => post({ ...valid(), target: theirs.key, unit: 'N' }), /not found in this build/)
      await expectRefused(w.build.id, 404, () => post({ ...valid(), revision: theirRev.label }), /not found in this build/)
      await expectRefused(w.build.id, 404, () => post({ ...valid(), target: 'no_such_target' }))
      await expectRefused(w.build.id, 404, () => post({ ...valid(), revision: 'R404' }))
      await expectRefused(w.build.id, 400, () => post({ ...valid(), target: 'a\u0000b' }), /^target: .*NUL/)
      await expectRefused(w.build.id, 400, () => post({ ...valid(), revision: 'R\u00001' }), /^revision: .*NUL/)
      // the other build's rig token can't post here either
      const rig = new Client()
      rig.bearer = w.foreignToken
      await expectRefused(w.build.id, 404, () => post(valid(), rig))
    })

    it('403 for a Reviewer, 401 without credentials', async () => {
      await expectRefused(w.build.id, 403, () => post(valid(), w.reviewer.client))
      await expectRefused(w.build.id, 401, () => post(valid(), new Client()))
    })
  })

  it('a rig token posts readings on its build, recorded as the rig’s', async () => {
    const c = await cell({ unit: 'A', comparator: 'atMost', threshold: 30 })
    const rig = new Client()
    rig.bearer = w.ownToken
    const res = await post({ revision: c.label, target: c.key, values: [28.1, 28.4, 27.9], unit: 'A', method: 'dyno log', takenAt: '2026-04-06T10:30:00Z' }, rig)
    expect(res.status).toBe(201)
    const token = await testDb()('rig_tokens').where({ token_hash: createHash('sha256').update(w.ownToken).digest('hex') }).first('id', 'name')
    const row = await testDb()('readings').where({ id: res.body.reading.id }).first()
    expect(row).toMatchObject({ rig_token_id: token.id, taken_by: null })
    expect(new Date(row.taken_at).toISOString()).toBe('2026-04-06T10:30:00.000Z')
    const detail = await w.engineer.client.get(`/api/v1/builds/${w.build.slug}/targets/${c.key}`)
    expect(detail.body.readings[0]).toMatchObject({ by: `rig token ${token.name}`, rig: true, method: 'dyno log' })
  })

  describe('DELETE /api/v1/builds/:build/readings/:id', () => {
    it('re-pools the cell and re-decides the next revision’s movement', async () => {
      const b = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Delete test' })).body
      const t = await newTarget(w.engineer.client, b.slug, { unit: 'N', comparator: 'atLeast', threshold: 5 })
      for (const label of ['R1', 'R2', 'R3']) await newRevision(w.engineer.client, b.slug, label)
      await addReading(w.engineer.client, b.slug, { revision: 'R1', target: t.key, values: [10, 10.1, 9.9], unit: 'N' })
      const r2 = await addReading(w.engineer.client, b.slug, { revision: 'R2', target: t.key, values: [12, 12.1, 11.9], unit: 'N' })
      await addReading(w.engineer.client, b.slug, { revision: 'R3', target: t.key, values: [12.05, 12.1, 12.0], unit: 'N' })
      const r3cell = () => testDb()('cell_stats as c').join('revisions as r', 'r.id', 'c.revision_id').where({ 'c.target_id': t.id, 'r.label': 'R3' }).first('c.*')
      expect((await r3cell()).movement).toBe('steady')

      const res = await w.engineer.client.delete(`/api/v1/builds/${b.slug}/readings/${r2.reading.id}`)
      expect(res.status).toBe(204)
      expect(await testDb()('readings').where({ id: r2.reading.id }).first()).toBeUndefined()
      expect(await testDb()('cell_stats').where({ target_id: t.id }).pluck('revision_id')).toHaveLength(2)
      // R3 is now compared with R1: a rise of about 2 N, far outside the scatter
      const after = await r3cell()
      expect(after.movement).toBe('gained')
      expect(after.delta).toBeCloseTo(12.05 - 10, 12)
      const audit = await testDb()('audit_log').where({ action: 'reading.deleted', team_id: w.team.id }).whereRaw(`detail->>'target' = ?`, [t.key]).first()
      expect(audit.detail).toMatchObject({ revision: 'R2', n: 3 })
    })

    it('403 for a Reviewer; 404 for another build’s reading or a bad id', async () => {
      const c = await cell({ unit: 'N' })
      const mine = await addReading(w.engineer.client, w.build.slug, { revision: c.label, target: c.key, values: [1, 2], unit: 'N' })
      await expectRefused(w.build.id, 403, () => w.reviewer.client.delete(`/api/v1/builds/${w.build.slug}/readings/${mine.reading.id}`))
      const t = await newTarget(w.outsider.client, w.foreignBuild.slug)
      const r = await newRevision(w.outsider.client, w.foreignBuild.slug, uniqueKey('R'))
      const theirs = await addReading(w.outsider.client, w.foreignBuild.slug, { revision: r.label, target: t.key, values: [1], unit: 'N' })
      await expectRefused(w.build.id, 404, () => w.engineer.client.delete(`/api/v1/builds/${w.build.slug}/readings/${theirs.reading.id}`))
      await expectRefused(w.build.id, 404, () => w.engineer.client.delete(`/api/v1/builds/${w.build.slug}/readings/not-a-uuid`))
    })
  })
})
