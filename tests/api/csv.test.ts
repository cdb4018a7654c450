import { randomBytes } from 'node:crypto'
import Papa from 'papaparse'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { uploadOk } from '../support/files'
import { addReading, expectRefused, newRevision, newTarget } from '../support/measure'

// 1 lbf·ft = 1.3558179483314004 N·m (NIST SP 811 (2008) B.8: lbf = 4.4482216152605 N exactly,
// ft = 0.3048 m exactly); the import and the API must agree to the last bit, not just to this.

const STATS = ['n', 'mean', 'sd', 'uA', 'uB', 'u', 'nuEff', 'ci95', 'unit', 'status'] as const
const pick = (o: Record<string, unknown>) => Object.fromEntries(STATS.map(k => [k, o[k]]))

describe('CSV import and export', () => {
  let w: World
  const b = () => w.build.slug
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  async function fixture(unit = 'N·m') {
    const t = await newTarget(w.owner.client, b(), { unit, comparator: 'atLeast', threshold: 40, name: 'Continuous wheel torque' })
    const r1 = await newRevision(w.owner.client, b(), `I${randomBytes(3).toString('hex')}`)
    const r2 = await newRevision(w.owner.client, b(), `J${randomBytes(3).toString('hex')}`)
    return { key: t.key, targetId: t.id, r1: r1.label, r2: r2.label }
  }

  const importCsv = (body: Record<string, unknown>, c = w.engineer.client) => c.post(`/api/v1/builds/${b()}/import`, body)

  it('previews the header, the first rows and a guess at the columns', async () => {
    const csv = '# torque arm log\n\ntimestamp;sample;torque\n2026-03-14 10:30:00;1;31,0\n2026-03-14 10:30:05;2;31,2\n'
    const f = await uploadOk(w.engineer.client, b(), 'arm.csv', csv)
    const res = await w.engineer.client.get(`/api/v1/builds/${b()}/import/preview?file=${f.id}`)
    expect(res.status).toBe(200)
    // the instrument's preamble before the header is skipped; lines keep their numbers in the file
    expect(res.body).toMatchObject({ delimiter: ';', headerLine: 3, columns: ['timestamp', 'sample', 'torque'], totalRows: 2 })
    expect(res.body.rows.map((r: { line: number }) => r.line)).toEqual([4, 5])
    const good = await uploadOk(w.engineer.client, b(), 'arm2.csv', 'timestamp;sample;torque\r\n2026-03-14 10:30:00;1;31,0\r\n\r\n2026-03-14 10:30:05;2;31,2\r\n')
    const preview = (await w.engineer.client.get(`/api/v1/builds/${b()}/import/preview?file=${good.id}`)).body
    expect(preview).toMatchObject({
      file: { id: good.id, name: 'arm2.csv' },
      delimiter: ';',
      headerLine: 1,
      columns: ['timestamp', 'sample', 'torque'],
      rows: [{ line: 2, cells: ['2026-03-14 10:30:00', '1', '31,0'] }, { line: 4, cells: ['2026-03-14 10:30:05', '2', '31,2'] }],
      totalRows: 2,
      guess: { value: 'torque', time: 'timestamp', unit: null, revision: null, u: null, dof: null },
      problem: null,
    })
    const png = await uploadOk(w.engineer.client, b(), 'photo.png', Buffer.from('89504e470d0a1a0a0000000d49484452', 'hex'))
    expect((await w.engineer.client.get(`/api/v1/builds/${b()}/import/preview?file=${png.id}`)).body.problem).toMatch(/not a text file/)
    expect((await w.outsider.client.get(`/api/v1/builds/${b()}/import/preview?file=${good.id}`)).status).toBe(404)
  })

  it('a good file gives the same statistics as the same values posted through the API', async () => {
    const { key, r1, r2 } = await fixture()
    const values = [30.9, 31.2, 31.0, 31.4, 30.8, 31.1]
    const csv = ['time,torque,unit', ...values.map((v, i) => `2026-03-14T10:3${i}:00Z,${v},lbf·ft`)].join('\n')
    const f = await uploadOk(w.engineer.client, b(), 'torque-arm.csv', csv)
    const imported = await importCsv({ file: f.id, target: key, revision: r1, valueColumn: 'torque', unitColumn: 'unit', timeColumn: 'time', resolution: 0.1, method: 'Torque arm' })
    expect(imported.status, JSON.stringify(imported.body)).toBe(201)
    expect(imported.body.rows).toBe(6)
    expect(imported.body.readings).toHaveLength(1)
    const fromCsv = imported.body.readings[0]
    expect(fromCsv).toMatchObject({ revision: r1, unitEntered: 'lbf·ft', n: 6, firstLine: 2, lastLine: 7 })

    const posted = await addReading(w.engineer.client, b(), { revision: r2, target: key, values, unit: 'lbf·ft', resolution: 0.1 })
    expect(pick(fromCsv.reading)).toEqual(pick(posted.reading))
    expect(fromCsv.reading.n).toBe(6)
    expect(fromCsv.reading.status).toBe('met')

    // the cached cells agree too
    const cells = await testDb()('cell_stats as c').join('revisions as r', 'r.id', 'c.revision_id')
      .whereIn('r.label', [r1, r2]).where('r.build_id', w.build.id)
      .select('r.label', 'c.n', 'c.mean', 'c.sd', 'c.u', 'c.ci_low', 'c.ci_high', 'c.status')
    const byLabel = Object.fromEntries(cells.map(({ label, ...rest }) => [label, rest]))
    expect(byLabel[r1]).toEqual(byLabel[r2])

    // the reading keeps the file's times, method and values as entered; the file is its evidence
    const row = await testDb()('readings').where({ id: fromCsv.reading.id }).first()
    expect(row).toMatchObject({ values_entered: values, unit_entered: 'lbf·ft', method: 'Torque arm', resolution_entered: 0.1, taken_by: w.engineer.user.id })
    expect(new Date(row.taken_at).toISOString()).toBe('2026-03-14T10:30:00.000Z')
    const file = await testDb()('files').where({ id: f.id }).first()
    expect(file.reading_id).toBe(fromCsv.reading.id)
    expect(file.revision_id).toBe(row.revision_id)

    // a file is imported once
    const again = await importCsv({ file: f.id, target: key, revision: r1, valueColumn: 'torque', unitColumn: 'unit' })
    expect(again.status).toBe(409)
  })

  it('a file with one bad row is refused whole, and the message names the line', async () => {
    const { key, r1 } = await fixture()
    const csv = 'sample,torque\n1,41.2\n2,41.9\n3,4l.0\n4,40.8\n'
    const f = await uploadOk(w.engineer.client, b(), 'one-bad-row.csv', csv)
    const res = await expectRefused(w.build.id, 422,
      () => importCsv({ file: f.id, target: key, revision: r1, valueColumn: 'torque', unit: 'N·m' }),
      /^Line 4: "4l\.0" in column "torque" is not a number$/)
    expect(res.body.data).toEqual({ problems: [{ line: 4, message: 'Line 4: "4l.0" in column "torque" is not a number' }], problemCount: 1 })
    expect((await testDb()('files').where({ id: f.id }).first()).reading_id).toBeNull()
  })

  it('names every problem line: units of another quantity, unknown units, bad times, quotes left open', async () => {
    const { key, r1 } = await fixture()
    const csv = 'torque,unit,time\n41,N·m,2026-03-14T10:00:00Z\n42,V,2026-03-14T10:00:01Z\n43,zorkmid,2026-03-14T10:00:02Z\n44,N·m,noon\n"45,N·m,2026-03-14T10:00:04Z\n'
    const f = await uploadOk(w.engineer.client, b(), 'messy.csv', csv)
    const res = await expectRefused(w.build.id, 422, () => importCsv({ file: f.id, target: key, revision: r1, valueColumn: 'torque', unitColumn: 'unit', timeColumn: 'time' }))
    const lines = res.body.data.problems.map((p: { line: number }) => p.line)
    expect(lines.slice(0, 3)).toEqual([3, 4, 5])
    expect(res.body.data.problems[0].message).toBe('Line 3: unit "V" is a voltage unit; this target is measured in torque (N·m)')
    expect(res.body.data.problems[1].message).toBe('Line 4: unit "zorkmid" is not a unit Ratchet knows')
    expect(res.body.data.problems[2].message).toMatch(/^Line 5: "noon" in column "time" is not a date and time/)
    expect(res.body.data.problems.some((p: { message: string }) => p.message === 'Line 6: a quoted field is not closed')).toBe(true)
  })

  it('a revision column makes one reading per revision; an unknown or signed-off revision is refused with its line', async () => {
    const { key, r1, r2 } = await fixture()
    const csv = `rev,torque\n${r1},41\n${r2},43\n${r1},42\n${r2},44\n`
    const f = await uploadOk(w.engineer.client, b(), 'two-revisions.csv', csv)
    const res = await importCsv({ file: f.id, target: key, revisionColumn: 'rev', valueColumn: 'torque', unit: 'N·m' })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    expect(res.body.readings.map((r: any) => [r.revision, r.n, r.reading.mean])).toEqual([[r1, 2, 41.5], [r2, 2, 43.5]])

    const unknown = await uploadOk(w.engineer.client, b(), 'unknown.csv', `rev,torque\n${r1},41\nR999,43\n`)
    await expectRefused(w.build.id, 422, () => importCsv({ file: unknown.id, target: key, revisionColumn: 'rev', valueColumn: 'torque', unit: 'N·m' }), /^Line 3: revision "R999" is not in this build$/)

    expect((await w.owner.client.post(`/api/v1/builds/${b()}/revisions/${r2}/freeze`)).status).toBe(200)
    const frozen = await uploadOk(w.engineer.client, b(), 'frozen.csv', `rev,torque\n${r1},41\n${r2},43\n`)
    await expectRefused(w.build.id, 422, () => importCsv({ file: frozen.id, target: key, revisionColumn: 'rev', valueColumn: 'torque', unit: 'N·m' }), new RegExp(`^Line 3: revision ${r2} is signed off`))
  })

  it('refuses bad requests with clear 4xx answers', async () => {
    const { key, r1 } = await fixture()
    const f = await uploadOk(w.engineer.client, b(), 'ok.csv', 'torque\n41\n')
    const cases: [Record<string, unknown>, number, RegExp][] = [
      [{ file: f.id, target: key, valueColumn: 'torque', unit: 'N·m' }, 400, /revision/i],
      [{ file: f.id, target: key, revision: r1, valueColumn: 'torque' }, 400, /unit/i],
      [{ file: f.id, target: 'no_such', revision: r1, valueColumn: 'torque', unit: 'N·m' }, 404, /Target "no_such" not found/],
      [{ file: f.id, target: key, revision: r1, valueColumn: 'speed', unit: 'N·m' }, 422, /no column "speed"/],
      [{ file: f.id, target: key, revision: r1, valueColumn: 'torque', unit: 'kg' }, 422, /"kg" is a mass unit/],
      [{ file: 'nope', target: key, revision: r1, valueColumn: 'torque', unit: 'N·m' }, 400, /file/],
    ]
    for (const [body, status, message] of cases) {
      const res = await expectRefused(w.build.id, status, () => importCsv(body))
      expect(res.body.message).toMatch(message)
    }
    expect((await importCsv({ file: f.id, target: key, revision: r1, valueColumn: 'torque', unit: 'N·m' }, w.reviewer.client)).status).toBe(403)
  })

  describe('export', () => {
    it('readings.csv has every sample: as entered, and in SI', async () => {
      const q = await makeWorld()
      const speed = await newTarget(q.owner.client, q.build.slug, { key: 'top_speed', unit: 'km/h', comparator: 'between', threshold: 24, thresholdHigh: 25 })
      const temp = await newTarget(q.owner.client, q.build.slug, { key: 'case_temp', unit: '°C', comparator: 'atMost', threshold: 80 })
      await newRevision(q.owner.client, q.build.slug, 'R1')
      await addReading(q.engineer.client, q.build.slug, { revision: 'R1', target: speed.key, values: [15.5, 15.6], unit: 'mph', method: 'GPS, "fast" log', takenAt: '2026-03-14T10:00:00Z' })
      await addReading(q.engineer.client, q.build.slug, { revision: 'R1', target: temp.key, values: [176], unit: '°F', method: '=HYPERLINK("x")' })
      const res = await q.reviewer.client.get(`/api/v1/builds/${q.build.slug}/export/readings.csv`)
      expect(res.status).toBe(200)
      expect(res.headers.get('content-type')).toBe('text/csv; charset=utf-8')
      expect(res.headers.get('content-disposition')).toBe(`attachment; filename="${q.build.slug}-readings.csv"`)
      const parsed = Papa.parse<string[]>(res.body.trim()).data
      // the first eleven columns as in every earlier version; kind, u, u_si and dof were added for stated results, track for tracks
      expect(parsed[0]).toEqual(['build', 'target', 'revision', 'reading', 'sample', 'value', 'unit', 'value_si', 'si_unit', 'taken_at', 'method', 'kind', 'u', 'u_si', 'dof', 'track'])
      expect(parsed).toHaveLength(4)
      const [, a, bRow, c] = parsed
      expect(a!.slice(0, 3)).toEqual([q.build.slug, 'top_speed', 'R1'])
      expect(a!.slice(4, 7)).toEqual(['1', '15.5', 'mph'])
      expect(Number(a![7])).toBeCloseTo(15.5 * 1609.344 / 3600, 12)
      expect(a!.slice(8)).toEqual(['m/s', '2026-03-14T10:00:00.000Z', 'GPS, "fast" log', 'samples', '', '', '', ''])
      expect(bRow!.slice(4, 7)).toEqual(['2', '15.6', 'mph'])
      // °F → K: (176 − 32)/1.8 + 273.15 = 353.15 (NIST SP 811 B.8)
      expect(c!.slice(1, 2)).toEqual(['case_temp'])
      expect(Number(c![7])).toBeCloseTo(353.15, 9)
      expect(c![8]).toBe('K')
      // a method that a spreadsheet would run as a formula is quoted as text
      expect(c![10]).toBe('\'=HYPERLINK("x")')
    })

    it('scoreboard.csv has one row per target and revision, numbers as the scoreboard shows them', async () => {
      const q = await makeWorld()
      await newTarget(q.owner.client, q.build.slug, { key: 'wheel_torque', unit: 'N·m', comparator: 'atLeast', threshold: 40, noiseBand: 0.5 })
      await newTarget(q.owner.client, q.build.slug, { key: 'unit_mass', unit: 'kg', comparator: 'atMost', threshold: 4.2 })
      for (const label of ['R1', 'R2']) await newRevision(q.owner.client, q.build.slug, label)
      await addReading(q.engineer.client, q.build.slug, { revision: 'R1', target: 'wheel_torque', values: [38, 39, 40], unit: 'N·m' })
      await addReading(q.engineer.client, q.build.slug, { revision: 'R2', target: 'wheel_torque', values: [31.0, 31.2, 31.4], unit: 'lbf·ft' })
      await addReading(q.engineer.client, q.build.slug, { revision: 'R2', target: 'unit_mass', values: [9.2, 9.3], unit: 'lb' })
      const board = (await q.reviewer.client.get(`/api/v1/builds/${q.build.slug}/scoreboard`)).body
      const res = await q.reviewer.client.get(`/api/v1/builds/${q.build.slug}/export/scoreboard.csv`)
      expect(res.status).toBe(200)
      const rows = Papa.parse<Record<string, string>>(res.body.trim(), { header: true }).data
      expect(rows.map(r => `${r.target}/${r.revision}`)).toEqual(['wheel_torque/R1', 'wheel_torque/R2', 'unit_mass/R1', 'unit_mass/R2'])
      const torque = board.targets.find((t: any) => t.key === 'wheel_torque')
      const r2 = torque.history.find((h: any) => h.revision === 'R2')
      expect(rows[1]).toMatchObject({ unit: 'N·m', n: '3', status: r2.status, movement: r2.movement })
      for (const [col, value] of [['mean', r2.mean], ['sd', r2.sd], ['u', r2.u], ['ci_low', r2.ci95[0]], ['ci_high', r2.ci95[1]], ['delta', r2.delta], ['p', r2.p]] as const) {
        expect(Number(rows[1]![col]), col).toBe(value)
      }
      expect(rows[2]).toMatchObject({ target: 'unit_mass', revision: 'R1', n: '0', status: 'untested', mean: '' })
      expect(rows[3]!.unit).toBe('kg')
      expect(Number(rows[3]!.mean)).toBeCloseTo(9.25 * 0.45359237, 12)
    })
  })
})
