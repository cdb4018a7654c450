import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, signUp, testDb, type World } from '../support/api'
import { linkIn, mailTo, waitForMail } from '../support/maildev'
import { addReading, newRevision, newTarget } from '../support/measure'

// Findings, fixes, comments and the lane rules, through the API as the board and a rig use it.

/** Every findings row of a build, for checking that a refused request changed nothing. */
async function findingsSnapshot(buildId: string) {
  const db = testDb()
  const ids = db('findings').where({ build_id: buildId }).select('id')
  const [findings, targets, fixes, events, comments] = await Promise.all([
    db('findings').where({ build_id: buildId }).orderBy('id'),
    db('finding_targets').whereIn('finding_id', ids).orderBy(['finding_id', 'target_id']),
    db('fixes').whereIn('finding_id', ids).orderBy('id'),
    db('finding_events').whereIn('finding_id', ids).orderBy('id'),
    db('finding_comments').whereIn('finding_id', ids).orderBy('id'),
  ])
  return { findings, targets, fixes, events, comments }
}

async function refused(buildId: string, status: number, call: () => Promise<{ status: number, body: any }>, message?: RegExp) {
  const before = await findingsSnapshot(buildId)
  const res = await call()
  expect(res.status, JSON.stringify(res.body)).toBe(status)
  expect(typeof res.body?.message).toBe('string')
  if (message) expect(res.body.message).toMatch(message)
  expect(await findingsSnapshot(buildId)).toEqual(before)
  return res
}

describe('findings', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  /** A build of its own, so lanes, revisions and targets are this test's alone. */
  async function freshBuild(name = 'Findings test') {
    const b = await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name })
    expect(b.status).toBe(201)
    return b.body as { id: string, slug: string }
  }
  const file = (c: Client, build: string, body: Record<string, unknown>) => c.post(`/api/v1/builds/${build}/findings`, { severity: 'degrades', ...body })
  const move = (c: Client, id: string, body: Record<string, unknown>) => c.post(`/api/v1/findings/${id}/move`, body)

  describe('filing and listing (API v1)', () => {
    it('files a finding in Spotted with its targets and revision, and lists it', async () => {
      const b = await freshBuild()
      await newTarget(w.owner.client, b.slug, { key: 'case_temp', name: 'Case temperature', unit: '°C', comparator: 'atMost', threshold: 80 })
      await newRevision(w.owner.client, b.slug, 'R4')
      const res = await file(w.engineer.client, b.slug, { title: 'Case hot after the climb', description: 'Fins too small', severity: 'blocks-target', seenOn: 'r4', targets: ['case_temp'] })
      expect(res.status).toBe(201)
      expect(res.body).toMatchObject({ title: 'Case hot after the climb', lane: 'spotted', severity: 'blocks-target', version: 1, seenOn: 'R4', targets: ['case_temp'], fixes: [] })
      expect(res.body.rank).toMatch(/^[A-Za-z][0-9A-Za-z]*$/)

      const list = await w.reviewer.client.get(`/api/v1/builds/${b.slug}/findings`)
      expect(list.status).toBe(200)
      expect(list.body).toEqual([res.body])
      const history = await testDb()('finding_events').where({ finding_id: res.body.id })
      expect(history.map(e => e.kind)).toEqual(['created'])
    })

    it('a rig token files and moves findings on its own build, and not elsewhere', async () => {
      const rig = new Client()
      rig.bearer = w.ownToken
      const res = await file(rig, w.build.slug, { title: 'Dyno: torque ripple above 300 rpm' })
      expect(res.status).toBe(201)
      expect((await move(rig, res.body.id, { lane: 'traced', version: 1 })).status).toBe(200)
      const detail = await w.owner.client.get(`/api/v1/findings/${res.body.id}`)
      expect(detail.body.createdBy).toBe('rig token bench rig')

      const foreign = new Client()
      foreign.bearer = w.foreignToken
      expect((await file(foreign, w.build.slug, { title: 'x' })).status).toBe(404)
      expect((await move(foreign, res.body.id, { lane: 'bench', version: 2 })).status).toBe(404)
    })

    it('lists safety findings first in their lane, and filters by lane and severity', async () => {
      const b = await freshBuild()
      const a = await file(w.engineer.client, b.slug, { title: 'A cosmetic', severity: 'cosmetic' })
      const s = await file(w.engineer.client, b.slug, { title: 'S battery lug heats', severity: 'safety' })
      const d = await file(w.engineer.client, b.slug, { title: 'D degrades' })
      await move(w.engineer.client, d.body.id, { lane: 'traced', version: 1 })
      const all = await w.engineer.client.get(`/api/v1/builds/${b.slug}/findings`)
      expect(all.body.map((f: any) => f.title)).toEqual(['S battery lug heats', 'A cosmetic', 'D degrades'])
      expect((await w.engineer.client.get(`/api/v1/builds/${b.slug}/findings?lane=traced`)).body.map((f: any) => f.id)).toEqual([d.body.id])
      expect((await w.engineer.client.get(`/api/v1/builds/${b.slug}/findings?severity=safety`)).body.map((f: any) => f.id)).toEqual([s.body.id])
      expect((await w.engineer.client.get(`/api/v1/builds/${b.slug}/findings?lane=nowhere`)).status).toBe(400)
      expect(a.body.rank < s.body.rank).toBe(true)
    })

    it.each([
      [{ title: '' }, 400, /title/],
      [{ title: 'x'.repeat(201) }, 400, /title/],
      [{ title: 'ok', severity: 'urgent' }, 400, /severity/],
      [{ title: 'ok', seenOn: 'R99' }, 404, /seenOn: Revision "R99" not found/],
      [{ title: 'ok', targets: ['no_such_key'] }, 404, /targets: "no_such_key" not found/],
      [{ title: 'ok', targets: ['a', 'a'] }, 400, /twice/],
      [{ title: 'ok', description: 12 }, 400, /description/],
    ])('refuses %j with %i and changes nothing', async (body, status, message) => {
      await refused(w.build.id, status, () => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/findings`, { severity: 'degrades', ...body }), message)
    })
  })

  describe('versions: a stale write is a 409', () => {
    it('refuses a move or an edit that names an older version, and returns the finding as it is', async () => {
      const f = (await file(w.engineer.client, w.build.slug, { title: 'Stale test' })).body
      expect((await move(w.owner.client, f.id, { lane: 'traced', version: 1 })).status).toBe(200)
      const res = await refused(w.build.id, 409, () => move(w.engineer.client, f.id, { lane: 'bench', version: 1 }), /changed since you loaded it .*version 1.* now at 2.*moved it to Traced/)
      expect(res.body.data.current).toMatchObject({ id: f.id, lane: 'traced', version: 2 })
      await refused(w.build.id, 409, () => w.engineer.client.patch(`/api/v1/findings/${f.id}`, { version: 1, title: 'Lost edit' }))
      const ok = await w.engineer.client.patch(`/api/v1/findings/${f.id}`, { version: 2, title: 'Kept edit' })
      expect(ok.status).toBe(200)
      expect(ok.body).toMatchObject({ title: 'Kept edit', version: 3 })
    })

    it('of two writes that start from the same version, one wins and one gets 409', async () => {
      const f = (await file(w.engineer.client, w.build.slug, { title: 'Race test' })).body
      const results = await Promise.all([
        move(w.engineer.client, f.id, { lane: 'traced', version: 1 }),
        move(w.owner.client, f.id, { lane: 'bench', version: 1 }),
        w.owner.client.patch(`/api/v1/findings/${f.id}`, { version: 1, severity: 'cosmetic' }),
      ])
      expect(results.map(r => r.status).sort()).toEqual([200, 409, 409])
      const row = await testDb()('findings').where({ id: f.id }).first()
      expect(row.version).toBe(2)
    })

    it('every write raises the version: edits, moves and fixes', async () => {
      const f = (await file(w.engineer.client, w.build.slug, { title: 'Version test' })).body
      await w.engineer.client.patch(`/api/v1/findings/${f.id}`, { version: 1, description: 'More detail' })
      await w.engineer.client.post(`/api/v1/findings/${f.id}/fixes`, { description: 'A fix' })
      await move(w.engineer.client, f.id, { lane: 'traced', version: 3 })
      expect((await testDb()('findings').where({ id: f.id }).first()).version).toBe(4)
    })
  })

  describe('the lane rules', () => {
    /**
     * A build with a torque target (≥ 40 N·m) and R1–R3; a finding seen on R1 that hurts it.
     * Readings: R1 34–35 N·m (Short); others as each test adds them.
     */
    async function arrange() {
      const b = await freshBuild('Lane rules')
      await newTarget(w.owner.client, b.slug, { key: 'wheel_torque', name: 'Wheel torque', unit: 'N·m', comparator: 'atLeast', threshold: 40 })
      for (const r of ['R1', 'R2', 'R3']) await newRevision(w.owner.client, b.slug, r)
      await addReading(w.owner.client, b.slug, { revision: 'R1', target: 'wheel_torque', values: [34.2, 35.1, 33.8], unit: 'N·m' })
      const f = (await file(w.engineer.client, b.slug, { title: 'Torque short on the ramp', severity: 'blocks-target', seenOn: 'R1', targets: ['wheel_torque'] })).body
      return { b, f }
    }

    it('Retest needs a landed fix', async () => {
      const { b, f } = await arrange()
      await refused(b.id, 422, () => move(w.engineer.client, f.id, { lane: 'retest', version: 1 }), /^Retest needs a landed fix/)
      const fix = await w.engineer.client.post(`/api/v1/findings/${f.id}/fixes`, { description: 'Planetary stage', ownerId: w.engineer.user.id, dueOn: '2026-03-01' })
      expect(fix.status).toBe(201)
      await refused(b.id, 422, () => move(w.engineer.client, f.id, { lane: 'retest', version: 2 }), /landed fix/)
      const landed = await w.engineer.client.patch(`/api/v1/findings/${f.id}/fixes/${fix.body.id}`, { state: 'landed', landedIn: 'R2' })
      expect(landed.body).toMatchObject({ state: 'landed', landedIn: 'R2' })
      const ok = await move(w.engineer.client, f.id, { lane: 'retest', version: 3 })
      expect(ok.status).toBe(200)
      expect(ok.body.finding).toMatchObject({ lane: 'retest', version: 4 })
    })

    it('Closed needs a reading on a later revision with the hurt target Met there', async () => {
      const { b, f } = await arrange()
      const fix = (await w.engineer.client.post(`/api/v1/findings/${f.id}/fixes`, { description: 'Planetary stage', state: 'landed', landedIn: 'R2' })).body
      expect(fix.landedIn).toBe('R2')
      // no reading after R1 yet
      await refused(b.id, 422, () => move(w.engineer.client, f.id, { lane: 'closed', version: 2 }), /Closing needs a reading on a revision after R1 \(where it was seen\) and from R2 on \(where its fix landed\); there is none yet/)
      // a reading on R2 that is still Short
      await addReading(w.owner.client, b.slug, { revision: 'R2', target: 'wheel_torque', values: [38.0, 38.4, 37.9], unit: 'N·m' })
      await refused(b.id, 422, () => move(w.engineer.client, f.id, { lane: 'closed', version: 2 }), /Closing needs wheel_torque Met on one revision .*; on R2: wheel_torque Short/)
      // R3 meets it: 43 N·m with a tight spread
      await addReading(w.owner.client, b.slug, { revision: 'R3', target: 'wheel_torque', values: [43.6, 42.9, 43.8, 43.1], unit: 'N·m' })
      const board = await w.engineer.client.get(`/api/v1/builds/${b.slug}/findings/board`)
      expect(board.body.findings[0]).toMatchObject({ id: f.id, verifiedOn: 'R3', closeBlocker: null })
      const ok = await move(w.engineer.client, f.id, { lane: 'closed', version: 2 })
      expect(ok.status).toBe(200)
      const detail = (await w.reviewer.client.get(`/api/v1/findings/${f.id}`)).body
      expect(detail).toMatchObject({ lane: 'closed', verification: { revision: 'R3' }, override: null })
      expect(detail.closedAt).not.toBeNull()
      expect(detail.history[0]).toMatchObject({ kind: 'moved', detail: { from: 'spotted', to: 'closed', verifiedBy: 'R3' } })
      // open findings no longer count it
      const open = await w.reviewer.client.get(`/api/v1/builds/${b.slug}/findings/open`)
      expect(open.body).toEqual({ canFile: false, byTarget: {} })
    })

    it('a finding that hurts a derived target closes when the derived value is Met on a later revision', async () => {
      const { b } = await arrange()
      // wheel power = torque × speed, ≥ 400 W; speed 10 rad/s on R1 and R2
      await newTarget(w.owner.client, b.slug, { key: 'wheel_speed', name: 'Wheel speed', unit: 'rad/s', comparator: 'atLeast', threshold: 1 })
      await newTarget(w.owner.client, b.slug, { key: 'wheel_power', name: 'Wheel power', unit: 'W', comparator: 'atLeast', threshold: 400, formula: 'wheel_torque * wheel_speed' })
      for (const r of ['R1', 'R2']) await addReading(w.owner.client, b.slug, { revision: r, target: 'wheel_speed', values: [9.98, 10.0, 10.02], unit: 'rad/s' })
      const g = (await file(w.engineer.client, b.slug, { title: 'Power short on the ramp', severity: 'blocks-target', seenOn: 'R1', targets: ['wheel_power'] })).body
      // R2: 38 N·m × 10 rad/s ≈ 381 W, Short
      await addReading(w.owner.client, b.slug, { revision: 'R2', target: 'wheel_torque', values: [38.0, 38.4, 37.9], unit: 'N·m' })
      await refused(b.id, 422, () => move(w.engineer.client, g.id, { lane: 'closed', version: 1 }), /Closing needs wheel_power Met on one revision .*; on R2: wheel_power Short/)
      // R3: 43 N·m × 10 rad/s ≈ 434 W, Met
      await addReading(w.owner.client, b.slug, { revision: 'R3', target: 'wheel_torque', values: [43.6, 42.9, 43.8, 43.1], unit: 'N·m' })
      await addReading(w.owner.client, b.slug, { revision: 'R3', target: 'wheel_speed', values: [9.99, 10.0, 10.01], unit: 'rad/s' })
      const board = await w.engineer.client.get(`/api/v1/builds/${b.slug}/findings/board`)
      expect(board.body.findings.find((c: { id: string }) => c.id === g.id)).toMatchObject({ verifiedOn: 'R3', closeBlocker: null })
      const ok = await move(w.engineer.client, g.id, { lane: 'closed', version: 1 })
      expect(ok.status, JSON.stringify(ok.body)).toBe(200)
      const detail = (await w.reviewer.client.get(`/api/v1/findings/${g.id}`)).body
      expect(detail).toMatchObject({ lane: 'closed', verification: { revision: 'R3' }, override: null })
      // the finding's page shows the derived target's status as the board reads it
      expect(detail.targetInfo).toEqual([expect.objectContaining({ key: 'wheel_power', status: 'met' })])
    })

    it('a finding that hurts no target closes on any reading after the one it was seen on', async () => {
      const { b } = await arrange()
      const g = (await file(w.engineer.client, b.slug, { title: 'Rattle at 18 km/h', severity: 'cosmetic', seenOn: 'R1' })).body
      await refused(b.id, 422, () => move(w.engineer.client, g.id, { lane: 'closed', version: 1 }), /there is none yet/)
      await addReading(w.owner.client, b.slug, { revision: 'R2', target: 'wheel_torque', values: [30, 31], unit: 'N·m' })
      expect((await move(w.engineer.client, g.id, { lane: 'closed', version: 1 })).status).toBe(200)
      // leaving Closed clears the closing record
      const back = await move(w.engineer.client, g.id, { lane: 'traced', version: 2 })
      expect(back.status).toBe(200)
      expect(await testDb()('findings').where({ id: g.id }).first('closed_at', 'verified_revision_id')).toEqual({ closed_at: null, verified_revision_id: null })
    })

    it('an Owner may override with a reason kept in the history; an Engineer or a rig may not', async () => {
      const { b, f } = await arrange()
      const override = { reason: 'Verified on the customer’s dyno; their log is attached' }
      await refused(b.id, 403, () => move(w.engineer.client, f.id, { lane: 'closed', version: 1, override }), /Only an Owner/)
      const rig = new Client()
      const tok = await w.owner.client.post(`/api/builds/${b.slug}/tokens`, { name: 'rules rig' })
      rig.bearer = tok.body.token
      await refused(b.id, 403, () => move(rig, f.id, { lane: 'closed', version: 1, override }))
      await refused(b.id, 400, () => move(w.owner.client, f.id, { lane: 'closed', version: 1, override: { reason: 'ok' } }), /override.reason/)
      const refusal = await refused(b.id, 422, () => move(w.owner.client, f.id, { lane: 'retest', version: 1 }))
      expect(refusal.body.data).toMatchObject({ rule: 'retest', canOverride: true })

      const ok = await move(w.owner.client, f.id, { lane: 'closed', version: 1, override })
      expect(ok.status).toBe(200)
      expect(ok.body).toMatchObject({ override: true, finding: { lane: 'closed', version: 2 } })
      const detail = (await w.reviewer.client.get(`/api/v1/findings/${f.id}`)).body
      expect(detail.override).toEqual({ reason: override.reason, by: 'Olu Owner' })
      expect(detail.history[0]).toMatchObject({
        kind: 'moved',
        actor: 'Olu Owner',
        detail: { from: 'spotted', to: 'closed', override: { reason: override.reason, rule: expect.stringMatching(/^Closing needs/) } },
      })
      const audit = await testDb()('audit_log').where({ action: 'finding.override' }).whereRaw(`detail->>'finding' = ?`, [f.id])
      expect(audit).toHaveLength(1)
      // written with the move, by the Owner, in the build's team
      expect(audit[0]).toMatchObject({ actor_id: w.owner.user.id, detail: { from: 'spotted', to: 'closed', reason: override.reason } })
      expect(audit[0].team_id).toBe((await testDb()('builds').where({ id: b.id }).first('team_id')).team_id)
    })

    it('refuses neighbours that are not where the caller thought, and changes nothing', async () => {
      const b = await freshBuild()
      const x = (await file(w.engineer.client, b.slug, { title: 'x' })).body
      const y = (await file(w.engineer.client, b.slug, { title: 'y' })).body
      await refused(b.id, 409, () => move(w.engineer.client, x.id, { lane: 'traced', before: y.id, version: 1 }), /“y” is in Spotted, not Traced/)
      await refused(b.id, 400, () => move(w.engineer.client, x.id, { lane: 'spotted', before: x.id, version: 1 }), /next to itself/)
      await refused(b.id, 404, () => move(w.engineer.client, x.id, { lane: 'spotted', before: '00000000-0000-4000-8000-000000000000', version: 1 }), /before/)
      await refused(b.id, 400, () => move(w.engineer.client, x.id, { lane: 'sideways', version: 1 }), /lane/)
      await refused(b.id, 400, () => move(w.engineer.client, x.id, { lane: 'traced' }), /version/)
      await refused(b.id, 400, () => w.engineer.client.request('POST', `/api/v1/findings/${x.id}/move`, '{"lane":', { 'content-type': 'application/json' }))
      await refused(b.id, 404, () => move(w.engineer.client, '00000000-0000-4000-8000-000000000000', { lane: 'traced', version: 1 }))
    })
  })

  describe('editing, fixes and history', () => {
    it('records who changed what', async () => {
      const b = await freshBuild()
      await newTarget(w.owner.client, b.slug, { key: 'peak_current', unit: 'A', comparator: 'atMost', threshold: 30 })
      await newRevision(w.owner.client, b.slug, 'R3')
      const f = (await file(w.engineer.client, b.slug, { title: 'Current spike' })).body
      const edit = await w.owner.client.patch(`/api/v1/findings/${f.id}`, { version: 1, title: 'Current spike at standing start', severity: 'safety', seenOn: 'R3', targets: ['peak_current'], description: 'Clamp meter peak 36 A' })
      expect(edit.status).toBe(200)
      expect(edit.body).toMatchObject({ severity: 'safety', seenOn: 'R3', targets: ['peak_current'], version: 2 })
      const fix = await w.engineer.client.post(`/api/v1/findings/${f.id}/fixes`, { description: 'Soft current ramp', ownerId: w.engineer.user.id, dueOn: '2026-04-20' })
      await w.engineer.client.patch(`/api/v1/findings/${f.id}/fixes/${fix.body.id}`, { state: 'landed', landedIn: 'R3', dueOn: null })
      const detail = (await w.reviewer.client.get(`/api/v1/findings/${f.id}`)).body
      expect(detail.history.map((e: any) => e.kind)).toEqual(['fix-edited', 'fix-added', 'edited', 'created'])
      expect(detail.history[2]).toMatchObject({
        actor: 'Olu Owner',
        detail: {
          title: { from: 'Current spike', to: 'Current spike at standing start' },
          severity: { from: 'degrades', to: 'safety' },
          seenOn: { from: null, to: 'R3' },
          targets: { added: ['peak_current'], removed: [] },
          description: { edited: true },
        },
      })
      expect(detail.history[0]).toMatchObject({ actor: 'Eno Engineer', detail: { changes: { state: { from: 'Planned', to: 'Landed' }, landedIn: { from: null, to: 'R3' }, dueOn: { from: '2026-04-20', to: null } } } })
      expect(detail.fixes).toEqual([{ id: fix.body.id, description: 'Soft current ramp', state: 'landed', owner: { id: w.engineer.user.id, name: 'Eno Engineer' }, dueOn: null, landedIn: 'R3' }])
      expect(detail.targetInfo).toEqual([expect.objectContaining({ key: 'peak_current', status: 'untested', caution: true })])
      // an edit that changes nothing writes nothing
      const same = await w.owner.client.patch(`/api/v1/findings/${f.id}`, { version: detail.version, title: 'Current spike at standing start' })
      expect(same.body.version).toBe(detail.version)
    })

    it.each([
      [{ description: '' }, 400, /Describe the fix/],
      [{ description: 'x', state: 'landed' }, 400, /landedIn: Say which revision/],
      [{ description: 'x', landedIn: 'R1' }, 400, /landed state/],
      [{ description: 'x', dueOn: '2026-13-40' }, 400, /due date/],
      [{ description: 'x', state: 'landed', landedIn: 'R404' }, 404, /landedIn/],
    ])('refuses the fix %j with %i', async (body, status, message) => {
      const f = (await file(w.engineer.client, w.build.slug, { title: 'Fix input' })).body
      await refused(w.build.id, status, () => w.engineer.client.post(`/api/v1/findings/${f.id}/fixes`, body), message)
    })

    it('a fix owner must be a member of the team', async () => {
      const f = (await file(w.engineer.client, w.build.slug, { title: 'Owner test' })).body
      await refused(w.build.id, 422, () => w.engineer.client.post(`/api/v1/findings/${f.id}/fixes`, { description: 'x', ownerId: w.outsider.user.id }), /member of this build’s team/)
      const other = (await file(w.engineer.client, w.build.slug, { title: 'Other' })).body
      const fix = (await w.engineer.client.post(`/api/v1/findings/${other.id}/fixes`, { description: 'x' })).body
      // a fix is addressed through its own finding only
      await refused(w.build.id, 404, () => w.engineer.client.patch(`/api/v1/findings/${f.id}/fixes/${fix.id}`, { state: 'dropped' }))
    })
  })

  describe('comments', () => {
    it('e-mails the members a comment mentions, once each, and not its author', async () => {
      const f = (await file(w.engineer.client, w.build.slug, { title: `Mention test ${Date.now()}` })).body
      const res = await w.reviewer.client.post(`/api/v1/findings/${f.id}/comments`, { body: '@Eno @Olu Owner the bearing runs hot at 30 km/h; @Rae I logged it' })
      expect(res.status).toBe(201)
      expect(res.body.mentions.map((m: { name: string }) => m.name).sort()).toEqual(['Eno Engineer', 'Olu Owner', 'Rae Reviewer'])
      const subject = new RegExp(`Rae Reviewer mentioned you on “${f.title}”`)
      const [toEngineer, toOwner] = await Promise.all([waitForMail(w.engineer.email, subject), waitForMail(w.owner.email, subject)])
      expect(toEngineer.text).toContain('the bearing runs hot at 30 km/h')
      expect(linkIn(toEngineer, `/findings/${f.id}`)).toMatch(new RegExp(`/builds/${w.build.slug}/findings/${f.id}$`))
      expect(toOwner.html).toContain('Open the finding')
      // the sweep runs again: still one e-mail each, and none to the author who named themself
      await new Promise(r => setTimeout(r, 1500))
      expect((await mailTo(w.engineer.email)).filter(m => subject.test(m.subject))).toHaveLength(1)
      expect((await mailTo(w.owner.email)).filter(m => subject.test(m.subject))).toHaveLength(1)
      expect((await mailTo(w.reviewer.email)).filter(m => subject.test(m.subject))).toHaveLength(0)
      const notices = await testDb()('mention_notices').where({ comment_id: res.body.id })
      expect(notices.map(n => n.user_id).sort()).toEqual([w.engineer.user.id, w.owner.user.id].sort())
      expect(notices.every(n => n.sent_at !== null)).toBe(true)
    })

    it('stores Markdown, renders it sanitized, and lists the team members it mentions', async () => {
      const f = (await file(w.engineer.client, w.build.slug, { title: 'Comment test' })).body
      const res = await w.reviewer.client.post(`/api/v1/findings/${f.id}/comments`, {
        body: 'Seen again, @Eno please check. <script>window.__pwned=1</script><img src=x onerror="window.__pwned=1"> **Bold** @Oz is not in this team',
      })
      expect(res.status).toBe(201)
      expect(res.body.mentions).toEqual([{ id: w.engineer.user.id, name: 'Eno Engineer' }])
      expect(res.body.html).toContain('<strong>Bold</strong>')
      expect(res.body.html).not.toMatch(/<script|<img|onerror/)
      expect(res.body.body).toContain('<script>')
      const stored = await testDb()('finding_comments').where({ id: res.body.id }).first()
      expect(stored.body).toBe(res.body.body)
      const detail = (await w.owner.client.get(`/api/v1/findings/${f.id}`)).body
      expect(detail.commentList).toEqual([res.body])
      // comments don't change the finding's version: they never conflict with a move
      expect(detail.version).toBe(1)
    })

    it('refuses an empty comment, and outsiders', async () => {
      const f = (await file(w.engineer.client, w.build.slug, { title: 'Comment refusals' })).body
      await refused(w.build.id, 400, () => w.reviewer.client.post(`/api/v1/findings/${f.id}/comments`, { body: '   ' }), /Write a comment/)
      await refused(w.build.id, 404, () => w.outsider.client.post(`/api/v1/findings/${f.id}/comments`, { body: 'hello' }))
    })
  })

  describe('reviewers', () => {
    it('read and comment, but do not file, edit or move', async () => {
      const f = (await file(w.engineer.client, w.build.slug, { title: 'Reviewer test' })).body
      await refused(w.build.id, 403, () => file(w.reviewer.client, w.build.slug, { title: 'nope' }), /Engineer role/)
      await refused(w.build.id, 403, () => move(w.reviewer.client, f.id, { lane: 'traced', version: 1 }))
      await refused(w.build.id, 403, () => w.reviewer.client.patch(`/api/v1/findings/${f.id}`, { version: 1, title: 'nope' }))
      await refused(w.build.id, 403, () => w.reviewer.client.post(`/api/v1/findings/${f.id}/fixes`, { description: 'nope' }))
      const board = await w.reviewer.client.get(`/api/v1/builds/${w.build.slug}/findings/board`)
      expect(board.status).toBe(200)
      expect(board.body.role).toBe('reviewer')
    })
  })

  describe('my fixes, open findings per target, build health', () => {
    it('lists the person’s open fixes across builds by due date, undated last', async () => {
      const me = await signUp({ name: 'Fix Owner' })
      await testDb()('memberships').insert({ team_id: w.team.id, user_id: me.user.id, role: 'engineer' })
      const b1 = await freshBuild('Fixes one')
      const b2 = await freshBuild('Fixes two')
      await newRevision(w.owner.client, b1.slug, 'R1')
      const f1 = (await file(w.engineer.client, b1.slug, { title: 'First', severity: 'safety' })).body
      const f2 = (await file(w.engineer.client, b2.slug, { title: 'Second' })).body
      const add = (f: string, body: Record<string, unknown>) => w.engineer.client.post(`/api/v1/findings/${f}/fixes`, { ownerId: me.user.id, ...body })
      const late = (await add(f2.id, { description: 'late', dueOn: '2020-01-10' })).body
      const undated = (await add(f1.id, { description: 'undated' })).body
      const soon = (await add(f1.id, { description: 'soon', dueOn: '2099-05-01', state: 'in-progress' })).body
      await add(f1.id, { description: 'landed', state: 'landed', landedIn: 'R1' })
      await add(f2.id, { description: 'dropped', state: 'dropped', dueOn: '2020-01-01' })
      await w.engineer.client.post(`/api/v1/findings/${f2.id}/fixes`, { description: 'someone else’s', ownerId: w.engineer.user.id, dueOn: '2020-01-01' })

      const mine = await me.client.get('/api/me/fixes')
      expect(mine.status).toBe(200)
      expect(mine.body.map((x: any) => x.id)).toEqual([late.id, soon.id, undated.id])
      expect(mine.body[1]).toEqual({ id: soon.id, description: 'soon', state: 'in-progress', dueOn: '2099-05-01', finding: { id: f1.id, title: 'First', severity: 'safety', lane: 'spotted' }, build: { slug: b1.slug, name: 'Fixes one' } })
      // leaving the team hides them
      await testDb()('memberships').where({ team_id: w.team.id, user_id: me.user.id }).delete()
      expect((await me.client.get('/api/me/fixes')).body).toEqual([])
    })

    it('counts open findings per target and per build', async () => {
      const b = await freshBuild('Open counts')
      await newTarget(w.owner.client, b.slug, { key: 'unit_mass', unit: 'kg', comparator: 'atMost', threshold: 4.2 })
      await newTarget(w.owner.client, b.slug, { key: 'peak_current', unit: 'A', comparator: 'atMost', threshold: 30 })
      const a = (await file(w.engineer.client, b.slug, { title: 'Heavy carrier', targets: ['unit_mass'] })).body
      const s = (await file(w.engineer.client, b.slug, { title: 'Lug heats', severity: 'safety', targets: ['unit_mass', 'peak_current'] })).body
      const p = (await file(w.engineer.client, b.slug, { title: 'Parked one', targets: ['unit_mass'] })).body
      await move(w.engineer.client, p.id, { lane: 'parked', version: 1 })
      const open = await w.engineer.client.get(`/api/v1/builds/${b.slug}/findings/open`)
      expect(open.body).toEqual({
        canFile: true,
        byTarget: {
          unit_mass: [{ id: s.id, title: 'Lug heats', severity: 'safety' }, { id: a.id, title: 'Heavy carrier', severity: 'degrades' }],
          peak_current: [{ id: s.id, title: 'Lug heats', severity: 'safety' }],
        },
      })
      const builds = await w.reviewer.client.get(`/api/teams/${w.team.slug}/builds`)
      expect(builds.body.find((x: any) => x.slug === b.slug).openFindings).toBe(2)
    })
  })
})
