import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { addReading, expectRefused, expectRelClose, newRevision, newTarget, uniqueKey } from '../support/measure'

// Exact unit definitions used below: 1 km/h = 1000/3600 m/s; 1 mph = 1609.344 m / 3600 s
// (international mile, NIST SP 811 (2008) B.8); t/°C = T/K − 273.15 (SI Brochure, 9th ed.,
// 2.3.1); 1 lb = 0.45359237 kg (NIST SP 811 B.8).
const KMH = 1000 / 3600
const MPH = 1609.344 / 3600

describe('targets', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  const path = () => `/api/v1/builds/${w.build.slug}/targets`

  it('POST creates a target in its display unit and stores the thresholds in SI', async () => {
    const key = uniqueKey('speed')
    const res = await w.engineer.client.post(path(), {
      key, name: 'Assisted top speed', unit: 'km/h', comparator: 'between', threshold: 24, thresholdHigh: 25, noiseBand: 0.3, notes: 'flat road',
    })
    expect(res.status).toBe(201)
    expect(res.body).toMatchObject({
      key, name: 'Assisted top speed', unit: 'km/h', quantity: 'velocity', quantityLabel: 'velocity', comparator: 'between',
      threshold: 24, thresholdHigh: 25, stretch: null, noiseBand: 0.3, notes: 'flat road', archived: false, caution: false,
    })
    const row = await testDb()('targets').where({ id: res.body.id }).first()
    expectRelClose(row.threshold, 24 * KMH)
    expectRelClose(row.threshold_high, 25 * KMH)
    expectRelClose(row.noise_band, 0.3 * KMH)
  })

  it('stores a temperature threshold with the offset of the scale, and flags it for a caution', async () => {
    const res = await w.engineer.client.post(path(), { key: uniqueKey('temp'), name: 'Case temperature', unit: 'degC', comparator: 'atMost', threshold: 80, noiseBand: 2 })
    expect(res.status).toBe(201)
    expect(res.body).toMatchObject({ unit: '°C', threshold: 80, noiseBand: 2, caution: true, hazard: 'thermal' })
    const row = await testDb()('targets').where({ id: res.body.id }).first()
    expectRelClose(row.threshold, 80 + 273.15)
    // a noise band is a difference: no offset
    expect(row.noise_band).toBe(2)
  })

  it('takes the common spellings of a unit and answers with the canonical one', async () => {
    const a = await newTarget(w.engineer.client, w.build.slug, { unit: 'N*m' })
    const b = await newTarget(w.engineer.client, w.build.slug, { unit: 'lbf ft' })
    expect([a.unit, b.unit]).toEqual(['N·m', 'lbf·ft'])
  })

  it('GET lists the active targets in strip order, in display units', async () => {
    const x = await newTarget(w.owner.client, w.build.slug, { unit: 'lb', comparator: 'atMost', threshold: 9.5 })
    const res = await w.reviewer.client.get(path())
    expect(res.status).toBe(200)
    const keys = res.body.map((t: { key: string }) => t.key)
    expect(keys.at(-1)).toBe(x.key)
    const positions = res.body.map((t: { position: number }) => t.position)
    expect(positions).toEqual([...positions].sort((p, q) => p - q))
    expect(res.body.at(-1)).toMatchObject({ unit: 'lb', threshold: 9.5, quantity: 'mass' })
    const row = await testDb()('targets').where({ key: x.key }).first()
    expectRelClose(row.threshold, 9.5 * 0.45359237)
  })

  it('a rig token creates targets on its own build only', async () => {
    const rig = new Client()
    rig.bearer = w.ownToken
    const res = await rig.post(path(), { key: uniqueKey('rig'), name: 'Rig target', unit: 'A', comparator: 'atMost', threshold: 30 })
    expect(res.status).toBe(201)
    expect(res.body.caution).toBe(true)
    const other = await rig.post(`/api/v1/builds/${w.foreignBuild.slug}/targets`, { key: uniqueKey('rig'), name: 'Elsewhere', unit: 'A', comparator: 'atMost', threshold: 30 })
    expect(other.status).toBe(404)
  })

  describe('bad input gets a clear 4xx and changes nothing', () => {
    const valid = () => ({ key: uniqueKey('bad'), name: 'Bad', unit: 'N', comparator: 'atLeast', threshold: 1 })

    it('409 for a key that exists in the build (archived ones too)', async () => {
      const t = await newTarget(w.engineer.client, w.build.slug)
      await expectRefused(w.build.id, 409, () => w.engineer.client.post(path(), { ...valid(), key: t.key }), /exists/)
      await w.engineer.client.patch(`/api/v1/builds/${w.build.slug}/targets/${t.key}`, { archived: true })
      await expectRefused(w.build.id, 409, () => w.engineer.client.post(path(), { ...valid(), key: t.key }))
    })

    it('the same key is free in another build', async () => {
      const t = await newTarget(w.engineer.client, w.build.slug)
      const res = await w.outsider.client.post(`/api/v1/builds/${w.foreignBuild.slug}/targets`, { ...valid(), key: t.key })
      expect(res.status).toBe(201)
    })

    it('400 for an unreadable unit, naming it', async () => {
      const res = await expectRefused(w.build.id, 400, () => w.engineer.client.post(path(), { ...valid(), unit: 'zorkmid' }), /Unknown unit "zorkmid": "zorkmid" is not a unit/)
      expect(res.body.data.fields.unit).toBeTruthy()
    })

    it('400 for "fps", which is ambiguous (frames or feet per second)', async () => {
      await expectRefused(w.build.id, 400, () => w.engineer.client.post(path(), { ...valid(), unit: 'fps' }))
    })

    it.each([
      ['between without an upper threshold', { comparator: 'between', threshold: 24 }, 'thresholdHigh'],
      ['between with the upper below the lower', { comparator: 'between', threshold: 24, thresholdHigh: 23 }, 'thresholdHigh'],
      ['an upper threshold on an at-least target', { comparator: 'atLeast', threshold: 24, thresholdHigh: 30 }, 'thresholdHigh'],
      ['a stretch on the wrong side', { comparator: 'atMost', threshold: 30, stretch: 35 }, 'stretch'],
      ['a negative noise band', { noiseBand: -1 }, 'noiseBand'],
      ['a threshold as a string', { threshold: '24' }, 'threshold'],
      ['no threshold', { threshold: undefined }, 'threshold'],
      ['an unknown comparator', { comparator: 'greaterThan' }, 'comparator'],
      ['a key with capitals and spaces', { key: 'Top Speed' }, 'key'],
      ['the reserved key "order"', { key: 'order' }, 'key'],
      ['no name', { name: '' }, 'name'],
      ['a NUL character in the name', { name: 'a\u0000b' }, 'name'],
      ['a threshold too large for SI', { unit: 'kWh', threshold: 1e308 }, 'threshold'],
    ])('400 for %s', async (_name, change, field) => {
      const res = await expectRefused(w.build.id, 400, () => w.engineer.client.post(path(), { ...valid(), ...change }))
      expect(Object.keys(res.body.data.fields)).toContain(field)
    })
  })

  describe('PATCH /api/v1/builds/:build/targets/:key', () => {
    const patch = (key: string, body: unknown, c = w.engineer.client) => c.patch(`/api/v1/builds/${w.build.slug}/targets/${key}`, body)

    it('changes the display unit within the quantity; the SI thresholds stay', async () => {
      const t = await newTarget(w.engineer.client, w.build.slug, { unit: 'km/h', comparator: 'between', threshold: 24, thresholdHigh: 25 })
      const before = await testDb()('targets').where({ id: t.id }).first()
      const res = await patch(t.key, { unit: 'mph' })
      expect(res.status).toBe(200)
      expect(res.body.unit).toBe('mph')
      expectRelClose(res.body.threshold, 24 * KMH / MPH, 1e-11)
      expectRelClose(res.body.thresholdHigh, 25 * KMH / MPH, 1e-11)
      const after = await testDb()('targets').where({ id: t.id }).first()
      expect([after.threshold, after.threshold_high]).toEqual([before.threshold, before.threshold_high])
    })

    it('reads thresholds given with a new unit in that unit', async () => {
      const t = await newTarget(w.engineer.client, w.build.slug, { unit: 'kg', comparator: 'atMost', threshold: 4.2 })
      const res = await patch(t.key, { unit: 'lb', threshold: 9 })
      expect(res.status).toBe(200)
      expect(res.body.threshold).toBe(9)
      const row = await testDb()('targets').where({ id: t.id }).first()
      expectRelClose(row.threshold, 9 * 0.45359237)
    })

    it('422 for a unit of another quantity, naming both quantities', async () => {
      const t = await newTarget(w.engineer.client, w.build.slug, { unit: 'km/h' })
      const res = await expectRefused(w.build.id, 422, () => patch(t.key, { unit: 'kg' }))
      expect(res.body.message).toMatch(/mass/)
      expect(res.body.message).toMatch(/velocity/)
    })

    it('400 when the merged thresholds make no sense; 404 for an unknown key', async () => {
      const t = await newTarget(w.engineer.client, w.build.slug, { comparator: 'atLeast', threshold: 10 })
      await expectRefused(w.build.id, 400, () => patch(t.key, { comparator: 'between' }), /thresholdHigh/)
      await expectRefused(w.build.id, 400, () => patch(t.key, { threshold: 'high' }))
      await expectRefused(w.build.id, 404, () => patch('no_such_key', { name: 'x' }))
      const ok = await patch(t.key, { comparator: 'between', thresholdHigh: 12 })
      expect(ok.body).toMatchObject({ comparator: 'between', threshold: 10, thresholdHigh: 12 })
      const back = await patch(t.key, { comparator: 'atLeast' })
      expect(back.body).toMatchObject({ comparator: 'atLeast', thresholdHigh: null })
    })

    it('a threshold edit re-decides the cached status in the same request', async () => {
      const t = await newTarget(w.engineer.client, w.build.slug, { unit: 'N', comparator: 'atLeast', threshold: 40 })
      const r = await newRevision(w.engineer.client, w.build.slug, uniqueKey('R'))
      await addReading(w.engineer.client, w.build.slug, { revision: r.label, target: t.key, values: [42.0, 42.1, 41.9, 42.0], unit: 'N' })
      const status = async () => (await testDb()('cell_stats').where({ target_id: t.id }).first()).status
      expect(await status()).toBe('met')
      expect((await patch(t.key, { threshold: 45 })).status).toBe(200)
      expect(await status()).toBe('short')
      expect((await patch(t.key, { threshold: 42 })).status).toBe(200)
      expect(await status()).toBe('marginal')
    })

    it('a noise band edit re-decides the movement', async () => {
      // one sample per revision: no Welch test, the noise band alone decides
      // (docs/computation.md §Movement between revisions, rule 3)
      const t = await newTarget(w.engineer.client, w.build.slug, { unit: 'N', comparator: 'atLeast', threshold: 5, noiseBand: 0.5 })
      const r1 = await newRevision(w.engineer.client, w.build.slug, uniqueKey('R'))
      const r2 = await newRevision(w.engineer.client, w.build.slug, uniqueKey('R'))
      await addReading(w.engineer.client, w.build.slug, { revision: r1.label, target: t.key, values: [10], unit: 'N' })
      await addReading(w.engineer.client, w.build.slug, { revision: r2.label, target: t.key, values: [11], unit: 'N' })
      const movement = async () => (await testDb()('cell_stats').where({ target_id: t.id, revision_id: r2.id }).first()).movement
      expect(await movement()).toBe('gained')
      await patch(t.key, { noiseBand: 2 })
      expect(await movement()).toBe('steady')
    })

    it('archives and restores; an archived target takes no readings and leaves the lists', async () => {
      const t = await newTarget(w.engineer.client, w.build.slug)
      const r = await newRevision(w.engineer.client, w.build.slug, uniqueKey('R'))
      expect((await patch(t.key, { archived: true })).body.archived).toBe(true)
      const list = await w.engineer.client.get(`/api/v1/builds/${w.build.slug}/targets`)
      expect(list.body.map((x: { key: string }) => x.key)).not.toContain(t.key)
      const all = await w.engineer.client.get(`/api/v1/builds/${w.build.slug}/targets?archived=1`)
      expect(all.body.map((x: { key: string }) => x.key)).toContain(t.key)
      const board = await w.engineer.client.get(`/api/v1/builds/${w.build.slug}/scoreboard`)
      expect(board.body.targets.map((x: { key: string }) => x.key)).not.toContain(t.key)
      await expectRefused(w.build.id, 409, () => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/readings`, { revision: r.label, target: t.key, values: [1], unit: 'N' }), /archived/)
      const restored = await patch(t.key, { archived: false })
      expect(restored.body.archived).toBe(false)
      const audit = await testDb()('audit_log').where({ team_id: w.team.id }).whereIn('action', ['target.archived', 'target.restored']).whereRaw(`detail->>'target' = ?`, [t.key]).pluck('action')
      expect(audit.sort()).toEqual(['target.archived', 'target.restored'])
    })

    it('a Reviewer can’t edit (403)', async () => {
      const t = await newTarget(w.engineer.client, w.build.slug)
      await expectRefused(w.build.id, 403, () => patch(t.key, { name: 'Nope' }, w.reviewer.client))
    })
  })

  describe('POST /api/v1/builds/:build/targets/order', () => {
    it('puts the targets in the given order', async () => {
      const c = w.owner.client
      // a build of this world's team with three targets of its own
      const b = await c.post('/api/v1/builds', { team: w.team.slug, name: 'Order test' })
      const keys = [uniqueKey('a'), uniqueKey('b'), uniqueKey('c')]
      for (const key of keys) await newTarget(c, b.body.slug, { key })
      const res = await c.post(`/api/v1/builds/${b.body.slug}/targets/order`, { keys: [keys[2], keys[0], keys[1]] })
      expect(res.status).toBe(200)
      const list = await c.get(`/api/v1/builds/${b.body.slug}/targets`)
      expect(list.body.map((t: { key: string }) => t.key)).toEqual([keys[2], keys[0], keys[1]])
      expect(list.body.map((t: { position: number }) => t.position)).toEqual([0, 1, 2])

      const order = (body: unknown) => () => c.post(`/api/v1/builds/${b.body.slug}/targets/order`, body)
      await expectRefused(b.body.id, 400, order({ keys: [keys[0], keys[1]] }), /missing/)
      await expectRefused(b.body.id, 400, order({ keys: [...keys, 'no_such'] }), /no_such/)
      await expectRefused(b.body.id, 400, order({ keys: [keys[0], keys[0], keys[1], keys[2]] }), /twice/)
      await expectRefused(b.body.id, 400, order({ keys: 'a,b,c' }))
    })
  })

  describe('GET /api/v1/builds/:build/targets/:key', () => {
    it('gives the definition, history and every reading in the entered and the display unit', async () => {
      const t = await newTarget(w.engineer.client, w.build.slug, { unit: 'km/h', comparator: 'atLeast', threshold: 20 })
      const r1 = await newRevision(w.engineer.client, w.build.slug, uniqueKey('R'))
      await addReading(w.engineer.client, w.build.slug, { revision: r1.label, target: t.key, values: [15, 15.5], unit: 'mph', method: 'GPS', resolution: 0.1, notes: 'windy' })
      const res = await w.reviewer.client.get(`/api/v1/builds/${w.build.slug}/targets/${t.key}`)
      expect(res.status).toBe(200)
      expect(res.body.target).toMatchObject({ key: t.key, unit: 'km/h', threshold: 20 })
      expect(res.body.role).toBe('reviewer')
      expect(res.body.history).toHaveLength(1)
      const [reading] = res.body.readings
      expect(reading).toMatchObject({ revision: r1.label, unitEntered: 'mph', valuesEntered: [15, 15.5], method: 'GPS', resolutionEntered: 0.1, notes: 'windy', by: 'Eno Engineer', rig: false })
      expectRelClose(reading.values[0], 15 * MPH / KMH)
      expectRelClose(reading.values[1], 15.5 * MPH / KMH)
      expectRelClose(reading.resolution, 0.1 * MPH / KMH)
      expectRelClose(reading.stats.mean, 15.25 * MPH / KMH)
      for (const key of ['no_such_key', 'a%00b', 'Top%20Speed']) {
        const missing = await w.reviewer.client.get(`/api/v1/builds/${w.build.slug}/targets/${key}`)
        expect(missing.status, key).toBe(404)
      }
    })
  })
})

describe('GET /api/units', () => {
  it('lists the units of one quantity for the picker', async () => {
    const res = await new Client().get('/api/units?quantity=torque')
    expect(res.status).toBe(200)
    expect(res.body.map((u: { unit: string }) => u.unit)).toEqual(expect.arrayContaining(['N·m', 'N·cm', 'kgf·cm', 'lbf·ft', 'ozf·in']))
    expect(res.body.every((u: { quantity: string }) => u.quantity === 'torque')).toBe(true)
    expect(res.body[0]).toEqual({ unit: 'N·m', quantity: 'torque', quantityLabel: 'torque', label: 'newton metre', words: 'moment' })
  })

  it('lists every unit without a filter, and refuses an unknown quantity', async () => {
    const all = await new Client().get('/api/units')
    // every named quantity has at least its SI unit listed
    expect(new Set(all.body.map((u: { quantity: string }) => u.quantity)).size).toBe(49)
    const bad = await new Client().get('/api/units?quantity=colour')
    expect(bad.status).toBe(400)
    expect(bad.body.message).toMatch(/quantity/)
  })
})
