import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { addReading, expectRefused, expectRelClose, newRevision, newTarget, uniqueKey } from '../support/measure'

// Exact definitions (NIST SP 811 (2008) B.8): 1 lbf = 0.45359237 kg × 9.80665 m/s²
// = 4.4482216152605 N; 1 in = 0.0254 m; 1 ozf = lbf/16. Prefixes are exact powers of ten.
const LBF = 0.45359237 * 9.80665
const INCH = 0.0254

describe('open units through the API', () => {
  let w: World
  let revision: string
  beforeAll(async () => {
    w = await makeWorld()
    revision = (await newRevision(w.engineer.client, w.build.slug, 'U1')).label
  })
  afterAll(closeTestDb)

  const targets = () => `/api/v1/builds/${w.build.slug}/targets`
  const readings = () => `/api/v1/builds/${w.build.slug}/readings`

  it.each([
    // typed unit, canonical, quantity, label, threshold, SI value of the threshold
    ['N/mm', 'N/mm', 'stiffness', 'stiffness', 12, 12_000],
    ['km/s', 'km/s', 'velocity', 'velocity', 1.2, 1200],
    ['kohm', 'kΩ', 'resistance', 'resistance', 4.7, 4700],
    ['Wh/kg', 'Wh/kg', 'specificEnergy', 'specific energy', 180, 180 * 3600],
    ['uF', 'µF', 'capacitance', 'capacitance', 220, 220e-6],
    ['L/min', 'L/min', 'flowRate', 'flow rate', 6, 6e-3 / 60],
    ['g/cm^3', 'g/cm³', 'density', 'density', 1.24, 1240],
    ['mN*m', 'mN·m', 'torque', 'torque', 35, 0.035],
    ['N/s', 'N/s', 'dim:kg·m/s³', 'dimension kg·m/s³', 50, 50],
  ])('a target in %s is stored as %s (%s) with its threshold in SI', async (typed, unit, quantity, quantityLabel, threshold, si) => {
    const res = await w.engineer.client.post(targets(), { key: uniqueKey('u'), name: `In ${typed}`, unit: typed, comparator: 'atLeast', threshold })
    expect(res.status).toBe(201)
    expect(res.body).toMatchObject({ unit, quantity, quantityLabel, threshold })
    const row = await testDb()('targets').where({ id: res.body.id }).first()
    expect(row.unit).toBe(unit)
    expectRelClose(row.threshold, si)
  })

  it('takes a reading in another spelling of the same quantity and converts it by the definitions', async () => {
    const t = await newTarget(w.engineer.client, w.build.slug, { unit: 'N/mm', threshold: 150 })
    const r = await addReading(w.engineer.client, w.build.slug, { revision, target: t.key, values: [1000, 1010], unit: 'lbf/in', resolution: 1 })
    const row = await testDb()('readings').where({ id: r.reading.id }).first()
    expect(row.unit_entered).toBe('lbf/in')
    // 1 lbf/in = 4.4482216152605 N / 0.0254 m = 175.126835… N/m
    expectRelClose(row.values_si[0], 1000 * LBF / INCH)
    expectRelClose(row.values_si[1], 1010 * LBF / INCH)
    const res = await w.engineer.client.get(`/api/v1/builds/${w.build.slug}/targets/${t.key}`)
    expect(res.status).toBe(200)
  })

  it('422 for a reading in a unit of another dimension, naming both quantities', async () => {
    const t = await newTarget(w.engineer.client, w.build.slug, { unit: 'kΩ', threshold: 1 })
    const res = await expectRefused(w.build.id, 422, () => w.engineer.client.post(readings(), { revision, target: t.key, values: [1], unit: 'µF' }))
    expect(res.body.message).toBe('unit: "µF" is a capacitance unit; this target is measured in resistance (kΩ)')
    expect(res.body.data.fields.unit).toBeTruthy()
  })

  it('keeps torque and energy apart, and angular speed and frequency', async () => {
    const torque = await newTarget(w.engineer.client, w.build.slug, { unit: 'mN·m', threshold: 1 })
    await expectRefused(w.build.id, 422, () => w.engineer.client.post(readings(), { revision, target: torque.key, values: [1], unit: 'J' }), /"J" is an energy unit; this target is measured in torque/)
    // a force times a length is a torque in any spelling
    await addReading(w.engineer.client, w.build.slug, { revision, target: torque.key, values: [2], unit: 'ozf*in' })
    const spin = await newTarget(w.engineer.client, w.build.slug, { unit: 'rpm', threshold: 1 })
    await expectRefused(w.build.id, 422, () => w.engineer.client.post(readings(), { revision, target: spin.key, values: [1], unit: 'Hz' }), /"Hz" is a frequency unit; this target is measured in angular speed/)
    await addReading(w.engineer.client, w.build.slug, { revision, target: spin.key, values: [2], unit: 'rev/s' })
  })

  it('400 for an unreadable expression, leaving the data as it was', async () => {
    const t = await newTarget(w.engineer.client, w.build.slug, { unit: 'N/mm', threshold: 1 })
    for (const unit of ['sin(m)', '1/0', 'm; s', 'm^99', '5 m', 'x'.repeat(10_000), `${'('.repeat(14)}m${')'.repeat(15)}`, 'm\u0000']) {
      await expectRefused(w.build.id, 400, () => w.engineer.client.post(readings(), { revision, target: t.key, values: [1], unit }))
      await expectRefused(w.build.id, 400, () => w.engineer.client.post(targets(), { key: uniqueKey('bad'), name: 'Bad', unit, comparator: 'atLeast', threshold: 1 }))
    }
  })

  it('changes a target to another unit of its quantity, and refuses one of another', async () => {
    const t = await newTarget(w.engineer.client, w.build.slug, { unit: 'N/mm', threshold: 12 })
    const ok = await w.engineer.client.patch(`${targets()}/${t.key}`, { unit: 'kN/m' })
    expect(ok.status).toBe(200)
    expect(ok.body).toMatchObject({ unit: 'kN/m', quantity: 'stiffness', threshold: 12 })
    await expectRefused(w.build.id, 422, () => w.engineer.client.patch(`${targets()}/${t.key}`, { unit: 'N' }), /"N" is a force unit; this target is measured in stiffness/)
  })

  it('previews a typed unit for the picker', async () => {
    const c = new Client()
    const a = await c.get('/api/units/check?unit=lbf%2Fin&to=N%2Fmm')
    expect(a.status).toBe(200)
    // 4.4482216152605 / 25.4 = 0.17512683… (SP 811 definitions), six significant digits
    expect(a.body).toEqual({ unit: 'lbf/in', quantity: 'stiffness', quantityLabel: 'stiffness', label: 'pound-force per inch', si: 'N/m', conversion: '1 lbf/in = 0.175127 N/mm' })
    const b = await c.get(`/api/units/check?unit=${encodeURIComponent('W/(m*K)')}`)
    expect(b.body).toMatchObject({ unit: 'W/(m·K)', quantity: 'thermalConductivity', conversion: null })
    const d = await c.get('/api/units/check?unit=kWh')
    expect(d.body.conversion).toBe('1 kWh = 3.6e6 J')
    const bad = await c.get('/api/units/check?unit=sin(m)')
    expect(bad.status).toBe(400)
    expect(bad.body.message).toMatch(/"sin" is not a unit/)
    const other = await c.get('/api/units/check?unit=J&to=N%C2%B7m')
    expect(other.status).toBe(422)
  })

  it('lists units of a quantity named by its dimension, and searches words', async () => {
    const res = await new Client().get('/api/units?quantity=stiffness')
    expect(res.body.map((u: { unit: string }) => u.unit)).toEqual(expect.arrayContaining(['N/mm', 'N/m', 'lbf/in']))
    expect(res.body[0].words).toMatch(/spring/)
  })
})
