import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { addReading, expectRefused, newRevision, newTarget, uniqueKey } from '../support/measure'

describe('revisions', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  const v1 = () => `/api/v1/builds/${w.build.slug}/revisions`
  const rev = (label: string) => `/api/v1/builds/${w.build.slug}/revisions/${label}`

  /** A build of its own, so the order of revisions is this test's alone. */
  async function freshBuild() {
    const b = await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Revision test' })
    return b.body as { id: string, slug: string }
  }

  it('POST creates revisions in order; the parent defaults to the latest', async () => {
    const b = await freshBuild()
    const r1 = await w.engineer.client.post(`/api/v1/builds/${b.slug}/revisions`, {
      label: 'R1', summary: 'First spin', changes: ['Stock motor', 'Steel carrier'], builtOn: '2026-02-02',
      parameters: [{ name: 'Gear ratio', value: 1 }, { name: 'Current limit', value: 35, unit: 'A' }, { name: 'Lever', value: 1.2, unit: 'N m' }, { name: 'Teeth', value: 36, unit: 'teeth' }, { name: 'Carrier', value: 'S235 steel' }],
    })
    expect(r1.status).toBe(201)
    expect(r1.body).toMatchObject({
      label: 'R1', seq: 1, parent: null, summary: 'First spin', changes: ['Stock motor', 'Steel carrier'], builtOn: '2026-02-02', frozen: false, frozenAt: null, readings: 0,
    })
    // known units come back in their canonical spelling; others as typed (the older {name, value}
    // shape: each takes a key made from its name, and no tolerance)
    expect(r1.body.parameters).toEqual([
      { key: 'gear_ratio', name: 'Gear ratio', value: 1, unit: null, tolerance: null }, { key: 'current_limit', name: 'Current limit', value: 35, unit: 'A', tolerance: null },
      { key: 'lever', name: 'Lever', value: 1.2, unit: 'N·m', tolerance: null }, { key: 'teeth', name: 'Teeth', value: 36, unit: 'teeth', tolerance: null },
      { key: 'carrier', name: 'Carrier', value: 'S235 steel', unit: null, tolerance: null },
    ])
    const r2 = await w.engineer.client.post(`/api/v1/builds/${b.slug}/revisions`, { label: 'R2' })
    expect(r2.body).toMatchObject({ label: 'R2', seq: 2, parent: 'R1', changes: [], parameters: [] })
    const r3 = await w.engineer.client.post(`/api/v1/builds/${b.slug}/revisions`, { label: 'R2b', parent: 'R1' })
    expect(r3.body).toMatchObject({ seq: 3, parent: 'R1' })
    const r4 = await w.engineer.client.post(`/api/v1/builds/${b.slug}/revisions`, { label: 'X1', parent: null })
    expect(r4.body).toMatchObject({ seq: 4, parent: null })

    const list = await w.reviewer.client.get(`/api/v1/builds/${b.slug}/revisions`)
    expect(list.status).toBe(200)
    expect(list.body.map((r: { label: string }) => r.label)).toEqual(['R1', 'R2', 'R2b', 'X1'])
  })

  it('a rig token creates a revision on its own build', async () => {
    const rig = new Client()
    rig.bearer = w.ownToken
    const res = await rig.post(v1(), { label: uniqueKey('RIG') })
    expect(res.status).toBe(201)
  })

  describe('bad input gets a clear 4xx and changes nothing', () => {
    it('409 for a label that exists, whatever its case', async () => {
      const label = uniqueKey('R').toUpperCase()
      await newRevision(w.engineer.client, w.build.slug, label)
      await expectRefused(w.build.id, 409, () => w.engineer.client.post(v1(), { label }), /exists/)
      await expectRefused(w.build.id, 409, () => w.engineer.client.post(v1(), { label: label.toLowerCase() }))
    })

    it('404 for a parent that is not in the build', async () => {
      const res = await expectRefused(w.build.id, 404, () => w.engineer.client.post(v1(), { label: uniqueKey('R'), parent: 'R999' }), /R999/)
      expect(res.body.data.fields.parent).toBeTruthy()
    })

    it.each([
      ['no label', { label: undefined }, 'label'],
      ['a label with a slash', { label: 'R1/2' }, 'label'],
      ['a label of 41 characters', { label: 'R'.repeat(41) }, 'label'],
      ['changes as a string', { changes: 'new motor' }, 'changes'],
      ['an empty change', { changes: ['ok', ''] }, 'changes.1'],
      ['a date that is not a date', { builtOn: '2026-02-30x' }, 'builtOn'],
      ['the 30th of February', { builtOn: '2026-02-30' }, 'builtOn'],
      ['the year 0', { builtOn: '0000-01-01' }, 'builtOn'],
      ['a NUL character in the summary', { summary: 'a\u0000b' }, 'summary'],
      ['a NUL character in a change', { changes: ['a\u0000b'] }, 'changes.0'],
      ['a parameter without a key or a name', { parameters: [{ value: 3 }] }, 'parameters.0.key'],
      ['a parameter value that is NaN-like', { parameters: [{ name: 'k', value: null }] }, 'parameters.0.value'],
    ])('400 for %s', async (_name, body, field) => {
      const res = await expectRefused(w.build.id, 400, () => w.engineer.client.post(v1(), { label: uniqueKey('R'), ...body }))
      expect(Object.keys(res.body.data.fields)).toContain(field)
    })

    it('403 for a Reviewer', async () => {
      await expectRefused(w.build.id, 403, () => w.reviewer.client.post(v1(), { label: uniqueKey('R') }))
    })
  })

  it('GET /revisions/:label gives changes, parameters, the parent and readings grouped by target', async () => {
    const b = await freshBuild()
    const speed = await newTarget(w.engineer.client, b.slug, { unit: 'km/h', comparator: 'atLeast', threshold: 20 })
    const mass = await newTarget(w.engineer.client, b.slug, { unit: 'kg', comparator: 'atMost', threshold: 5 })
    await newRevision(w.engineer.client, b.slug, 'R1')
    await newRevision(w.engineer.client, b.slug, 'R2', { changes: ['Lighter carrier'], parameters: [{ name: 'Gear ratio', value: 1.4 }] })
    await addReading(w.engineer.client, b.slug, { revision: 'R2', target: speed.key, values: [21, 22, 21.5], unit: 'km/h' })
    await addReading(w.engineer.client, b.slug, { revision: 'R2', target: speed.key, values: [13.5], unit: 'mph' })
    const res = await w.reviewer.client.get(`/api/v1/builds/${b.slug}/revisions/r2`)
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ label: 'R2', parent: 'R1', changes: ['Lighter carrier'], parameters: [{ key: 'gear_ratio', name: 'Gear ratio', value: 1.4, unit: null, tolerance: null, inherited: false }], readings: 2, targetsTested: 1, role: 'reviewer' })
    const byKey = Object.fromEntries(res.body.targets.map((t: { key: string }) => [t.key, t]))
    expect(byKey[speed.key].readings).toHaveLength(2)
    expect(byKey[speed.key].stats).toMatchObject({ revision: 'R2', readings: 2, n: 4 })
    expect(byKey[mass.key]).toMatchObject({ stats: null, readings: [] })
    for (const label of ['R9', 'R%00', '%E2%82%AC']) {
      const missing = await w.reviewer.client.get(`/api/v1/builds/${b.slug}/revisions/${label}`)
      expect(missing.status, label).toBe(404)
    }
  })

  it('PATCH edits an open revision', async () => {
    const label = uniqueKey('R')
    await newRevision(w.engineer.client, w.build.slug, label)
    const res = await w.engineer.client.patch(rev(label), { summary: 'Sealed housing', changes: ['IP65 gasket'], builtOn: '2026-04-06', parameters: [{ name: 'Fin area', value: 310, unit: 'cm²' }] })
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ summary: 'Sealed housing', changes: ['IP65 gasket'], builtOn: '2026-04-06', parameters: [{ name: 'Fin area', value: 310, unit: 'cm²' }] })
    await expectRefused(w.build.id, 400, () => w.engineer.client.patch(rev(label), { changes: [42] }))
    await expectRefused(w.build.id, 403, () => w.reviewer.client.patch(rev(label), { summary: 'x' }))
  })

  describe('freeze (sign-off) and unfreeze', () => {
    it('a Reviewer signs off; then the revision and its readings are read-only (409)', async () => {
      const t = await newTarget(w.engineer.client, w.build.slug)
      const label = uniqueKey('R')
      await newRevision(w.engineer.client, w.build.slug, label)
      const reading = await addReading(w.engineer.client, w.build.slug, { revision: label, target: t.key, values: [11, 12], unit: 'N' })

      await expectRefused(w.build.id, 403, () => w.engineer.client.post(`${rev(label)}/freeze`), /Reviewer or an Owner/)
      const res = await w.reviewer.client.post(`${rev(label)}/freeze`)
      expect(res.status).toBe(200)
      expect(res.body).toMatchObject({ label, frozen: true, frozenBy: 'Rae Reviewer' })
      expect(res.body.frozenAt).toBeTruthy()
      const row = await testDb()('revisions').where({ build_id: w.build.id, label }).first()
      expect(row.frozen_by).toBe(w.reviewer.user.id)
      const audit = await testDb()('audit_log').where({ action: 'revision.frozen', team_id: w.team.id }).whereRaw(`detail->>'revision' = ?`, [label]).first()
      expect(audit.actor_id).toBe(w.reviewer.user.id)

      await expectRefused(w.build.id, 409, () => w.reviewer.client.post(`${rev(label)}/freeze`), /already frozen/)
      await expectRefused(w.build.id, 409, () => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/readings`, { revision: label, target: t.key, values: [13], unit: 'N' }), /frozen/)
      await expectRefused(w.build.id, 409, () => w.engineer.client.delete(`/api/v1/builds/${w.build.slug}/readings/${reading.reading.id}`), /frozen/)
      await expectRefused(w.build.id, 409, () => w.engineer.client.patch(rev(label), { summary: 'late edit' }), /frozen/)
    })

    it('an Owner may sign off too', async () => {
      const label = uniqueKey('R')
      await newRevision(w.engineer.client, w.build.slug, label)
      expect((await w.owner.client.post(`${rev(label)}/freeze`)).status).toBe(200)
    })

    it('only an Owner reopens, and only with a reason, which the audit log keeps', async () => {
      const t = await newTarget(w.engineer.client, w.build.slug)
      const label = uniqueKey('R')
      await newRevision(w.engineer.client, w.build.slug, label)
      await expectRefused(w.build.id, 409, () => w.owner.client.post(`${rev(label)}/unfreeze`, { reason: 'x' }), /not frozen/)
      await w.reviewer.client.post(`${rev(label)}/freeze`)

      await expectRefused(w.build.id, 403, () => w.reviewer.client.post(`${rev(label)}/unfreeze`, { reason: 'wrong probe' }))
      await expectRefused(w.build.id, 403, () => w.engineer.client.post(`${rev(label)}/unfreeze`, { reason: 'wrong probe' }))
      await expectRefused(w.build.id, 400, () => w.owner.client.post(`${rev(label)}/unfreeze`, {}), /reason/)
      await expectRefused(w.build.id, 400, () => w.owner.client.post(`${rev(label)}/unfreeze`, { reason: '   ' }), /reason/)

      const reason = 'Thermocouple was on the wrong side of the case'
      const res = await w.owner.client.post(`${rev(label)}/unfreeze`, { reason })
      expect(res.status).toBe(200)
      expect(res.body).toMatchObject({ frozen: false, frozenAt: null, frozenBy: null })
      const audit = await testDb()('audit_log').where({ action: 'revision.unfrozen', team_id: w.team.id }).whereRaw(`detail->>'revision' = ?`, [label]).first()
      expect(audit.detail.reason).toBe(reason)
      expect(audit.actor_id).toBe(w.owner.user.id)
      // open again: readings may be added
      expect((await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/readings`, { revision: label, target: t.key, values: [13], unit: 'N' })).status).toBe(201)
    })
  })
})
