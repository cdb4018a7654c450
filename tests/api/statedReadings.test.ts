import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import Papa from 'papaparse'
import { closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { uploadOk } from '../support/files'
import { addReading, expectRefused, expectRelClose, newRevision, newTarget, uniqueKey } from '../support/measure'

// Critical values of Student's t, upper tail 0.025: NIST/SEMATECH e-Handbook of Statistical
// Methods, 1.3.6.7.2, printed to 3 decimals (ν = 6: 2.447; ν = 8: 2.306; ∞: 1.960).
const T975 = { 6: 2.447, 8: 2.306, inf: 1.960 }
// 1 mm = 0.001 m exactly (SI prefix milli; NIST SP 811 (2008) §6.2.1 with Table 5).

describe('readings with a stated uncertainty', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  const post = (body: unknown) => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/readings`, body)

  async function cell(target: Parameters<typeof newTarget>[2] = {}) {
    const t = await newTarget(w.engineer.client, w.build.slug, target)
    const r = await newRevision(w.engineer.client, w.build.slug, uniqueKey('R'))
    return { key: t.key, id: t.id, label: r.label, revisionId: r.id }
  }
  const cellRow = (targetId: string, revisionId: string) => testDb()('cell_stats').where({ target_id: targetId, revision_id: revisionId }).first()

  it('with dof: value ± t(0.975, dof)·u, stored with its kind, u and dof', async () => {
    const c = await cell({ unit: 'm', comparator: 'atLeast', threshold: 1 })
    const res = await post({ revision: c.label, target: c.key, value: 1250, u: 2, dof: 8, unit: 'mm', method: 'Certificate 7' })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    const r = res.body.reading
    expect(r).toMatchObject({ kind: 'stated', n: 1, unit: 'm', sd: null, uA: null, uB: null, nuEff: 8, status: 'met' })
    expectRelClose(r.mean, 1.25)
    expectRelClose(r.u, 0.002)
    expect(Math.abs((r.ci95[1] - r.mean) / r.u - T975[8])).toBeLessThanOrEqual(0.0005)
    expect(Math.abs((r.mean - r.ci95[0]) / r.u - T975[8])).toBeLessThanOrEqual(0.0005)

    const row = await testDb()('readings').where({ id: r.id }).first()
    expect(row).toMatchObject({ n: 1, values_entered: [1250], unit_entered: 'mm', stated_u_entered: 2, stated_dof: 8, resolution_si: null })
    expectRelClose(row.stated_u_si, 0.002)
    const detail = await w.engineer.client.get(`/api/v1/builds/${w.build.slug}/targets/${c.key}`)
    expect(detail.body.readings[0]).toMatchObject({ id: r.id, kind: 'stated', uEntered: 2, dof: 8, valuesEntered: [1250], unitEntered: 'mm' })
    expectRelClose(detail.body.readings[0].u, 0.002)
    expect(detail.body.latest).toMatchObject({ stated: 1, readings: 1, n: 1, nuEff: 8 })
  })

  it('without dof: ν is infinite and the interval uses 1.960', async () => {
    const c = await cell({ unit: 'N', comparator: 'atLeast', threshold: 10 })
    const res = await post({ revision: c.label, target: c.key, value: 10.3, u: 0.1, unit: 'N' })
    expect(res.status).toBe(201)
    const r = res.body.reading
    expect(r).toMatchObject({ kind: 'stated', nuEff: null, status: 'met' })
    expect(Math.abs((r.ci95[1] - 10.3) / 0.1 - T975.inf)).toBeLessThanOrEqual(0.0005)
    const row = await testDb()('readings').where({ id: r.id }).first()
    expect(row.stated_dof).toBeNull()
    expect(row.nu_eff).toBe(Infinity)
    // 10.3 − 1.96·0.3 < 10: marginal with a larger u
    const wide = await post({ revision: c.label, target: c.key, value: 10.3, u: 0.3, dof: null, unit: 'N' })
    expect(wide.body.reading.status).toBe('marginal')
  })

  it('a samples reading keeps its old answer, now saying its kind', async () => {
    const c = await cell({ unit: 'N' })
    const res = await post({ revision: c.label, target: c.key, values: [11, 12, 13], unit: 'N' })
    expect(res.body.reading).toMatchObject({ kind: 'samples', n: 3, mean: 12, sd: 1 })
    const detail = await w.engineer.client.get(`/api/v1/builds/${w.build.slug}/targets/${c.key}`)
    expect(detail.body.readings[0]).toMatchObject({ kind: 'samples', u: null, uEntered: null, dof: null })
    expect(detail.body.latest).toMatchObject({ stated: 0, sd: 1 })
  })

  describe('refused, leaving the data as it was', () => {
    it('400 for u < 0, u not a number, dof ≤ 0, or both values and value', async () => {
      const c = await cell({ unit: 'N' })
      const base = { revision: c.label, target: c.key, unit: 'N' }
      await expectRefused(w.build.id, 400, () => post({ ...base, value: 1, u: -0.1 }), /u is 0 or more/)
      await expectRefused(w.build.id, 400, () => post({ ...base, value: 1, u: 'small' }), /^u: .*finite number/)
      await expectRefused(w.build.id, 400, () => post({ ...base, value: 1 }), /^u: /)
      await expectRefused(w.build.id, 400, () => post({ ...base, value: 1, u: 0.1, dof: 0 }), /degrees of freedom/)
      await expectRefused(w.build.id, 400, () => post({ ...base, values: [1, 2], value: 1, u: 0.1 }), /either values .* not both/)
    })

    it('400 when u is too large for SI; 422 for a unit of another quantity', async () => {
      const c = await cell({ unit: 'm' })
      await expectRefused(w.build.id, 400, () => post({ revision: c.label, target: c.key, value: 1, u: 1e306, unit: 'km' }), /u: .*too large/)
      await expectRefused(w.build.id, 422, () => post({ revision: c.label, target: c.key, value: 1, u: 0.1, unit: 's' }))
    })

    it('422 naming the value when the cell’s weighted mean would overflow double precision', async () => {
      const c = await cell({ unit: 'N' })
      await addReading(w.engineer.client, w.build.slug, { revision: c.label, target: c.key, value: 1.7e308, u: 1, unit: 'N' })
      await expectRefused(w.build.id, 422, () => post({ revision: c.label, target: c.key, value: -1.7e308, u: 1, unit: 'N' }), /^value: .*double precision/)
    })
  })

  it('pools with sample readings by inverse-variance weighting, visible in the scoreboard; a delete re-pools', async () => {
    const c = await cell({ unit: 'N', comparator: 'atLeast', threshold: 10 })
    // samples: mean 10.2, sd 0.2, n = 7 → u = 0.2/√7, ν = 6
    const values = [10.0, 10.2, 10.4, 10.2, 10.0, 10.4, 10.2]
    await addReading(w.engineer.client, w.build.slug, { revision: c.label, target: c.key, values, unit: 'N' })
    const mean1 = 10.2
    const sd1 = Math.sqrt(values.reduce((s, v) => s + (v - mean1) ** 2, 0) / 6)
    const u1 = sd1 / Math.sqrt(7)
    const stated = await addReading(w.engineer.client, w.build.slug, { revision: c.label, target: c.key, value: 10.5, u: 0.1, dof: 6, unit: 'N' })
    // by hand: wᵢ = 1/uᵢ², x̄ = Σwᵢxᵢ/Σwᵢ, u = (Σwᵢ)^(−1/2); ν by Welch–Satterthwaite over cᵢ = u²/uᵢ (GUM G.4.1)
    const w1 = 1 / u1 ** 2
    const w2 = 1 / 0.01
    const mean = (w1 * mean1 + w2 * 10.5) / (w1 + w2)
    const u = 1 / Math.sqrt(w1 + w2)
    const nu = u ** 4 / ((u * u / u1) ** 4 / 6 + (u * u / 0.1) ** 4 / 6)
    expect(stated.pooled).toMatchObject({ readings: 2, n: 8, sd: null, uA: null, uB: null })
    expectRelClose(stated.pooled.mean, mean, 1e-12)
    expectRelClose(stated.pooled.u, u, 1e-12)
    expectRelClose(stated.pooled.nuEff, nu, 1e-9)

    const board = await w.reviewer.client.get(`/api/v1/builds/${w.build.slug}/scoreboard`)
    const entry = board.body.targets.find((t: { key: string }) => t.key === c.key).history.find((h: { revision: string }) => h.revision === c.label)
    expect(entry).toMatchObject({ readings: 2, stated: 1, n: 8, sd: null })
    expectRelClose(entry.mean, mean, 1e-12)
    expectRelClose(entry.nuEff, nu, 1e-9)
    // ν ≈ 10.0 here, so k lies between the e-Handbook's t(0.975, 11) = 2.201 and t(0.975, 9) = 2.262
    expect(nu).toBeGreaterThan(9)
    expect(nu).toBeLessThan(11)
    const k = (entry.ci95[1] - entry.mean) / entry.u
    expect(k).toBeGreaterThan(2.201 - 0.0005)
    expect(k).toBeLessThan(2.262 + 0.0005)

    const res = await w.engineer.client.delete(`/api/v1/builds/${w.build.slug}/readings/${stated.reading.id}`)
    expect(res.status).toBe(204)
    const after = await cellRow(c.id, c.revisionId)
    expect(after).toMatchObject({ readings: 1, stated: 0, n: 7, nu_eff: 6 })
    expectRelClose(after.mean, mean1, 1e-12)
    expectRelClose(after.sd, sd1, 1e-12)
    expect(Math.abs((after.ci_high - after.mean) / after.u - T975[6])).toBeLessThanOrEqual(0.0005)
  })

  it('moves between revisions by the generalised Welch test', async () => {
    const b = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Stated movement' })).body
    const t = await newTarget(w.engineer.client, b.slug, { unit: 'N', comparator: 'atLeast', threshold: 5 })
    for (const label of ['R1', 'R2', 'R3']) await newRevision(w.engineer.client, b.slug, label)
    await addReading(w.engineer.client, b.slug, { revision: 'R1', target: t.key, values: [10, 10.1, 9.9], unit: 'N' })
    await addReading(w.engineer.client, b.slug, { revision: 'R2', target: t.key, value: 11, u: 0.05, unit: 'N' })
    await addReading(w.engineer.client, b.slug, { revision: 'R3', target: t.key, value: 11.02, u: 0.05, unit: 'N' })
    const board = await w.engineer.client.get(`/api/v1/builds/${b.slug}/scoreboard`)
    const [r1, r2, r3] = board.body.targets[0].history
    expect(r1.movement).toBeNull()
    expect(r2).toMatchObject({ movement: 'gained', real: true, reason: 'welch' })
    expect(r2.p).toBeLessThan(0.05)
    // R3 vs R2: t = 0.02/√(2·0.05²) ≈ 0.28 with ν infinite: p = 2Φ(−0.283) ≈ 0.78
    expect(r3).toMatchObject({ movement: 'steady', real: false, reason: 'welch' })
    expect(r3.p).toBeGreaterThan(0.7)
    const compare = await w.engineer.client.get(`/api/v1/builds/${b.slug}/compare?a=R2&b=R3`)
    expect(compare.status).toBe(200)
    expect(compare.body.targets[0]).toMatchObject({ reason: 'welch', real: false })
    expect(compare.body.targets[0].p).toBeCloseTo(r3.p, 12)
  })

  describe('CSV', () => {
    it('imports rows with a u as stated results (dof blank: infinite) beside sample rows', async () => {
      const c = await cell({ unit: 'm', comparator: 'atLeast', threshold: 10 })
      const csv = ['value,unit,u,dof', '10.4,m,,', '10.6,m,,', '10.5,m,,', '1052,cm,3,5', '10.45,m,0.05,'].join('\n')
      const f = await uploadOk(w.engineer.client, w.build.slug, 'mixed.csv', csv)
      const preview = await w.engineer.client.get(`/api/v1/builds/${w.build.slug}/import/preview?file=${f.id}`)
      expect(preview.body.guess).toMatchObject({ value: 'value', unit: 'unit', u: 'u', dof: 'dof' })
      const res = await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/import`, { file: f.id, target: c.key, revision: c.label, valueColumn: 'value', unitColumn: 'unit', uColumn: 'u', dofColumn: 'dof' })
      expect(res.status, JSON.stringify(res.body)).toBe(201)
      const readings = res.body.readings as { n: number, unitEntered: string, firstLine: number, reading: { kind: string, nuEff: number | null, u: number, ci95: [number, number], mean: number } }[]
      expect(readings.map(r => [r.reading.kind, r.n, r.unitEntered, r.firstLine])).toEqual([['samples', 3, 'm', 2], ['stated', 1, 'cm', 5], ['stated', 1, 'm', 6]])
      const [, cN, exact] = readings
      // 1052 cm ± 3 cm with ν = 5 (1 cm = 0.01 m exactly): t(0.975, 5) = 2.571 (e-Handbook 1.3.6.7.2)
      expectRelClose(cN!.reading.mean, 10.52)
      expectRelClose(cN!.reading.u, 0.03)
      expect(cN!.reading.nuEff).toBe(5)
      expect(Math.abs((cN!.reading.ci95[1] - cN!.reading.mean) / cN!.reading.u - 2.571)).toBeLessThanOrEqual(0.0005)
      expect(exact!.reading.nuEff).toBeNull()
      const rows = await testDb()('readings').where({ target_id: c.id }).orderBy('stated_u_entered')
      expect(rows.map(r => [r.stated_u_entered, r.stated_dof])).toEqual([[0.05, null], [3, 5], [null, null]])
      const cellNow = await cellRow(c.id, c.revisionId)
      expect(cellNow).toMatchObject({ readings: 3, stated: 2, n: 5 })
    })

    it('refuses a u below 0, a dof of 0, and a dof without u, naming the lines', async () => {
      const c = await cell({ unit: 'N' })
      const csv = ['value,u,dof', '10,-1,', '11,0.1,0', '12,,4'].join('\n')
      const f = await uploadOk(w.engineer.client, w.build.slug, 'bad-u.csv', csv)
      const res = await expectRefused(w.build.id, 422, () => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/import`, { file: f.id, target: c.key, revision: c.label, valueColumn: 'value', unit: 'N', uColumn: 'u', dofColumn: 'dof' }))
      expect(res.body.data.problems.map((p: { line: number }) => p.line)).toEqual([2, 3, 4])
      expect(res.body.data.problems[0].message).toMatch(/standard uncertainty/)
      const noU = await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/import`, { file: f.id, target: c.key, revision: c.label, valueColumn: 'value', unit: 'N', dofColumn: 'dof' })
      expect(noU.status).toBe(400)
      expect(noU.body.message).toMatch(/dofColumn: .*goes with a standard uncertainty/)
    })

    it('round trip: the export carries kind, u and dof, and importing it gives the same readings', async () => {
      const src = await makeWorld()
      const t = await newTarget(src.owner.client, src.build.slug, { key: 'arm_mass', unit: 'kg', comparator: 'atMost', threshold: 2 })
      await newRevision(src.owner.client, src.build.slug, 'R1')
      await addReading(src.engineer.client, src.build.slug, { revision: 'R1', target: t.key, values: [1510, 1512], unit: 'g' })
      await addReading(src.engineer.client, src.build.slug, { revision: 'R1', target: t.key, value: 1.5112, u: 0.0004, dof: 9, unit: 'kg' })
      await addReading(src.engineer.client, src.build.slug, { revision: 'R1', target: t.key, value: 1511.5, u: 0.2, unit: 'g' })
      const exported = await src.reviewer.client.get(`/api/v1/builds/${src.build.slug}/export/readings.csv`)
      const parsed = Papa.parse<string[]>(exported.body.trim()).data
      const head = parsed[0]!
      const col = (row: string[], name: string) => row[head.indexOf(name)]
      expect(parsed.slice(1).map(r => [col(r, 'kind'), col(r, 'value'), col(r, 'unit'), col(r, 'u'), col(r, 'dof')])).toEqual([
        ['samples', '1510', 'g', '', ''],
        ['samples', '1512', 'g', '', ''],
        ['stated', '1.5112', 'kg', '0.0004', '9'],
        ['stated', '1511.5', 'g', '0.2', ''],
      ])
      expect(Number(col(parsed[3]!, 'u_si'))).toBeCloseTo(0.0004, 15)

      // into another build with the same target and revision
      const t2 = await newTarget(w.owner.client, w.build.slug, { unit: 'kg', comparator: 'atMost', threshold: 2 })
      const r2 = await newRevision(w.owner.client, w.build.slug, uniqueKey('R'))
      const f = await uploadOk(w.engineer.client, w.build.slug, 'export.csv', exported.body)
      const res = await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/import`, { file: f.id, target: t2.key, revision: r2.label, valueColumn: 'value', unitColumn: 'unit', uColumn: 'u', dofColumn: 'dof', timeColumn: 'taken_at' })
      expect(res.status, JSON.stringify(res.body)).toBe(201)
      const before = await testDb()('cell_stats').where({ target_id: t.id }).first()
      const after = await testDb()('cell_stats').where({ target_id: t2.id, revision_id: r2.id }).first()
      expect(before).toMatchObject({ readings: 3, stated: 2, n: 4, sd: null })
      expect(after).toMatchObject({ readings: 3, stated: 2, n: 4, sd: null, status: before.status })
      // the same numbers up to the order of summation (the readings of a cell are not ordered)
      for (const k of ['mean', 'u', 'nu_eff', 'ci_low', 'ci_high']) expectRelClose(after[k], before[k], 1e-12)
    })
  })
})
