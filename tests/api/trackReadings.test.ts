import jStat from 'jstat'
import Papa from 'papaparse'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { uploadOk } from '../support/files'
import { expectRefused, expectRelClose, newRevision, newTarget, uniqueKey } from '../support/measure'

// NIST StRD linear regression dataset "Norris": certified slope 1.00211681802045, its standard
// deviation 0.429796848199937E-03, 34 degrees of freedom. Taken here as times in ms (the dataset's x)
// and positions in mm (its y): mm/ms is m/s exactly (NIST SP 811, the prefix milli- on both).
const NORRIS_X = [0.2, 337.4, 118.2, 884.6, 10.1, 226.5, 666.3, 996.3, 448.6, 777.0, 558.2, 0.4, 0.6, 775.5, 666.9, 338.0, 447.5, 11.6,
  556.0, 228.1, 995.8, 887.6, 120.2, 0.3, 0.3, 556.8, 339.1, 887.2, 999.0, 779.0, 11.1, 118.3, 229.2, 669.1, 448.9, 0.5]
const NORRIS_Y = [0.1, 338.8, 118.1, 888.0, 9.2, 228.1, 668.5, 998.5, 449.1, 778.9, 559.2, 0.3, 0.1, 778.1, 668.8, 339.3, 448.9, 10.8,
  557.7, 228.3, 998.0, 888.8, 119.6, 0.3, 0.6, 557.6, 339.3, 888.0, 998.5, 778.9, 10.2, 117.6, 228.9, 668.4, 449.2, 0.2]
const NORRIS = NORRIS_X.map((t, i) => ({ t, x: NORRIS_Y[i]!, frame: i }))
const SLOPE = 1.00211681802045
const U = 0.429796848199937e-3

describe('track readings: a speed from positions at times', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  const post = (body: unknown) => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/readings`, body)

  async function cell(target: Parameters<typeof newTarget>[2] = {}) {
    const t = await newTarget(w.engineer.client, w.build.slug, { unit: 'm/s', comparator: 'atLeast', threshold: 1, ...target })
    const r = await newRevision(w.engineer.client, w.build.slug, uniqueKey('R'))
    return { key: t.key, id: t.id, label: r.label, revisionId: r.id }
  }

  it('is the least-squares slope with its standard error and ν = n − 2, its interval from Student’s t', async () => {
    const c = await cell()
    const clip = await uploadOk(w.engineer.client, w.build.slug, 'shot 4.webm', 'not really a video')
    const res = await post({ revision: c.label, target: c.key, track: { timeUnit: 'ms', unit: 'mm', points: NORRIS }, file: clip.id, method: 'footage, 240 fps, 36 frames' })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    const r = res.body.reading
    expect(r).toMatchObject({ kind: 'track', n: 1, unit: 'm/s', nuEff: 34, status: 'met' })
    expectRelClose(r.mean, SLOPE, 1e-12)
    expectRelClose(r.u, U, 1e-9)
    // jstat (a general-purpose statistics library): Student's t quantile
    const k = jStat.studentt.inv(0.975, 34)
    expectRelClose(r.ci95[1] - r.mean, k * U, 1e-6)
    expectRelClose(r.mean - r.ci95[0], k * U, 1e-6)

    // stored as entered, with the points; the clip is the reading's evidence now
    const row = await testDb()('readings').where({ id: r.id }).first()
    expect(row).toMatchObject({ unit_entered: 'mm/ms', stated_dof: 34, method: 'footage, 240 fps, 36 frames' })
    expect(row.track).toEqual({ timeUnit: 'ms', unit: 'mm', points: NORRIS, file: clip.id })
    expect(await testDb()('files').where({ id: clip.id }).first()).toMatchObject({ reading_id: r.id, revision_id: c.revisionId })

    const detail = await w.engineer.client.get(`/api/v1/builds/${w.build.slug}/targets/${c.key}`)
    expect(detail.body.readings[0]).toMatchObject({ id: r.id, kind: 'track', dof: 34, unitEntered: 'mm/ms', track: { timeUnit: 'ms', unit: 'mm', points: NORRIS, file: clip.id } })

    // and in the readings export, with its points
    const csv = await w.engineer.client.get(`/api/v1/builds/${w.build.slug}/export/readings.csv`)
    const rows = Papa.parse<string[]>((csv.body as string).trim()).data
    const header = rows[0]!
    const line = rows.find(l => l[header.indexOf('reading')] === r.id)!
    expect(line[header.indexOf('kind')]).toBe('track')
    expect(Number(line[header.indexOf('dof')])).toBe(34)
    expect(JSON.parse(line[header.indexOf('track')]!)).toEqual({ timeUnit: 'ms', unit: 'mm', points: NORRIS, file: clip.id })
  })

  it('converts to the target’s unit: in/s positions over s, shown in km/h', async () => {
    const c = await cell({ unit: 'km/h', threshold: 10 })
    // x = 100 in per second exactly, plus nothing: 100 in/s = 100 · 0.0254 · 3.6 km/h = 9.144 km/h (SP 811: 1 in = 0.0254 m)
    const res = await post({ revision: c.label, target: c.key, track: { timeUnit: 's', unit: 'in', points: [0, 0.5, 1, 1.5].map(t => ({ t, x: 100 * t })) } })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    expectRelClose(res.body.reading.mean, 9.144, 1e-12)
    expect(res.body.reading.u).toBeCloseTo(0, 12)
    expect(res.body.reading.status).toBe('short')
  })

  it('pools with the cell’s other readings as one result by inverse-variance weighting', async () => {
    const c = await cell()
    const samples = await post({ revision: c.label, target: c.key, values: [0.99, 1.0, 1.01], unit: 'm/s' })
    expect(samples.status).toBe(201)
    const res = await post({ revision: c.label, target: c.key, track: { timeUnit: 'ms', unit: 'mm', points: NORRIS } })
    expect(res.status).toBe(201)
    // J. R. Taylor, An Introduction to Error Analysis (1997) §7.2: x̄ = Σwᵢxᵢ / Σwᵢ, wᵢ = 1/uᵢ², u = (Σwᵢ)^−½;
    // the samples' u is sd/√3 = 0.01/√3
    const uS = 0.01 / Math.sqrt(3)
    const wS = 1 / uS ** 2
    const wT = 1 / U ** 2
    expect(res.body.pooled).toMatchObject({ readings: 2 })
    expectRelClose(res.body.pooled.mean, (wS * 1.0 + wT * SLOPE) / (wS + wT), 1e-9)
    expectRelClose(res.body.pooled.u, 1 / Math.sqrt(wS + wT), 1e-9)
    const cellRow = await testDb()('cell_stats').where({ target_id: c.id, revision_id: c.revisionId }).first()
    expect(cellRow).toMatchObject({ readings: 2, stated: 1 })
  })

  describe('refused, leaving the data as it was', () => {
    it('422 on a target that is not a speed, naming both quantities', async () => {
      const c = await cell({ unit: 'kg', threshold: 1 })
      await expectRefused(w.build.id, 422, () => post({ revision: c.label, target: c.key, track: { timeUnit: 's', unit: 'm', points: [{ t: 0, x: 0 }, { t: 1, x: 1 }, { t: 2, x: 2 }] } }), /velocity.*measured in mass \(kg\)/)
    })

    it('422 for positions not in a length, times not in a time; 400 for an unreadable unit', async () => {
      const c = await cell()
      const points = [{ t: 0, x: 0 }, { t: 1, x: 1 }, { t: 2, x: 2 }]
      await expectRefused(w.build.id, 422, () => post({ revision: c.label, target: c.key, track: { timeUnit: 's', unit: 'kg', points } }), /^track\.unit: "kg" is a unit of mass; positions are in a unit of length/)
      await expectRefused(w.build.id, 422, () => post({ revision: c.label, target: c.key, track: { timeUnit: 'mm', unit: 'm', points } }), /^track\.timeUnit: "mm" is a unit of length; times are in a unit of time/)
      await expectRefused(w.build.id, 400, () => post({ revision: c.label, target: c.key, track: { timeUnit: 's', unit: 'sin(m)', points } }), /^track\.unit: /)
    })

    it('400 for fewer than three points, non-numbers and more than 10,000 points; 422 for points all at one time', async () => {
      const c = await cell()
      const track = (points: unknown) => post({ revision: c.label, target: c.key, track: { timeUnit: 's', unit: 'm', points } })
      await expectRefused(w.build.id, 400, () => track([{ t: 0, x: 0 }]), /^track\.points: Give at least 3 points/)
      await expectRefused(w.build.id, 400, () => track([{ t: 0, x: 0 }, { t: 1, x: 'NaN' }, { t: 2, x: 2 }]), /^track\.points\.1\.x: .*finite number/)
      await expectRefused(w.build.id, 400, () => track([{ t: 0, x: 0 }, { t: 1, x: 1 }, { t: 'Infinity', x: 2 }]), /^track\.points\.2\.t: /)
      await expectRefused(w.build.id, 400, () => track(Array.from({ length: 10_001 }, (_, i) => ({ t: i, x: i }))), /at most 10,000 points/)
      await expectRefused(w.build.id, 422, () => track([{ t: 3, x: 0 }, { t: 3, x: 1 }, { t: 3, x: 2 }]), /^track\.points: .*more than one time/)
      // JSON has no NaN or Infinity: such a body is not JSON at all
      const text = `{"revision":"${c.label}","target":"${c.key}","track":{"timeUnit":"s","unit":"m","points":[{"t":0,"x":NaN},{"t":1,"x":1},{"t":2,"x":2}]}}`
      await expectRefused(w.build.id, 400, () => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/readings`, text, { 'content-type': 'application/json' }))
    })

    it('400 for a body mixing kinds; 422 for a file of another build', async () => {
      const c = await cell()
      const points = [{ t: 0, x: 0 }, { t: 1, x: 1 }, { t: 2, x: 2 }]
      await expectRefused(w.build.id, 400, () => post({ revision: c.label, target: c.key, values: [1], unit: 'm/s', track: { timeUnit: 's', unit: 'm', points } }), /one of values, value with u, or track/)
      await expectRefused(w.build.id, 422, () => post({ revision: c.label, target: c.key, track: { timeUnit: 's', unit: 'm', points }, file: '00000000-0000-4000-8000-000000000000' }), /^file: This build has no file/)
    })

    it('409 on a frozen revision', async () => {
      const c = await cell()
      expect((await w.reviewer.client.post(`/api/v1/builds/${w.build.slug}/revisions/${c.label}/freeze`)).status).toBe(200)
      await expectRefused(w.build.id, 409, () => post({ revision: c.label, target: c.key, track: { timeUnit: 's', unit: 'm', points: [{ t: 0, x: 0 }, { t: 1, x: 1 }, { t: 2, x: 2 }] } }), /frozen/)
    })
  })
})
