import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { importBody, uploadOk } from '../support/files'

afterAll(closeTestDb)

describe('rig tokens', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })

  it('is shown once, stored as a hash, and listed with its last use', async () => {
    const created = await w.engineer.client.post(`/api/builds/${w.build.slug}/tokens`, { name: 'thermal chamber' })
    expect(created.status).toBe(201)
    expect(created.body.token).toMatch(/^rig_/)
    const row = await testDb()('rig_tokens').where({ id: created.body.id }).first()
    expect(row.token_hash).toHaveLength(64)
    expect(JSON.stringify(row)).not.toContain(created.body.token)

    let list = await w.engineer.client.get(`/api/builds/${w.build.slug}/tokens`)
    let mine = list.body.find((t: any) => t.id === created.body.id)
    expect(mine.lastUsedAt).toBeNull()
    expect(mine.token).toBeUndefined()

    const rig = new Client()
    rig.bearer = created.body.token
    const builds = await rig.get('/api/v1/builds')
    expect(builds.status).toBe(200)
    expect(builds.body.map((b: any) => b.slug)).toEqual([w.build.slug])

    list = await w.engineer.client.get(`/api/builds/${w.build.slug}/tokens`)
    mine = list.body.find((t: any) => t.id === created.body.id)
    expect(mine.lastUsedAt).not.toBeNull()
    expect(mine.lastUsedIp).toBe(rig.ip)
  })

  it('acts only on its own build and only on API v1 routes', async () => {
    const rig = new Client()
    rig.bearer = w.ownToken
    expect((await rig.get(`/api/v1/builds/${w.build.slug}`)).status).toBe(200)
    expect((await rig.get(`/api/v1/builds/${w.foreignBuild.slug}`)).status).toBe(404)
    // outside API v1 a token is no session at all
    expect((await rig.get('/api/account')).status).toBe(401)
    expect((await rig.get(`/api/builds/${w.build.slug}/tokens`)).status).toBe(401)
    expect((await rig.get(`/api/teams/${w.team.slug}/members`)).status).toBe(401)
    // nor does it create builds
    expect((await rig.post('/api/v1/builds', { team: w.team.slug, name: 'Rogue' })).status).toBe(403)
  })

  it('reads and measures through every build route of API v1, and is refused sign-off, deletion, settings and people’s work', async () => {
    const rig = new Client()
    rig.bearer = w.ownToken
    const b = `/api/v1/builds/${w.build.slug}`
    const key = `rig_${Date.now().toString(36)}`
    expect((await w.owner.client.post(`${b}/targets`, { key, name: 'Rig torque', unit: 'N·m', comparator: 'atLeast', threshold: 40 })).status).toBe(201)
    for (const label of ['RA', 'RB']) expect((await w.owner.client.post(`${b}/revisions`, { label })).status).toBe(201)

    // the build, with the fields API v1 always had and the ones the UI reads
    const build = await rig.get(b)
    expect(build.status).toBe(200)
    expect(build.body).toMatchObject({ id: w.build.id, slug: w.build.slug, teamId: w.team.id, archived: false, role: 'engineer', team: { id: w.team.id, slug: w.team.slug } })

    // reads
    expect((await rig.get(`${b}/targets/${key}`)).body.target.key).toBe(key)
    expect((await rig.get(`${b}/revisions`)).body.map((r: any) => r.label)).toEqual(expect.arrayContaining(['RA', 'RB']))
    expect((await rig.get(`${b}/revisions/RA`)).status).toBe(200)
    expect((await rig.get(`${b}/compare?a=RA&b=RB`)).status).toBe(200)
    expect((await rig.get(`${b}/findings/board`)).status).toBe(200)
    expect((await rig.get(`${b}/findings/open`)).status).toBe(200)
    expect((await rig.get(`${b}/files`)).status).toBe(200)
    const csv = await rig.get(`${b}/export/readings.csv`)
    expect(csv.status).toBe(200)
    expect(csv.headers.get('content-type')).toMatch(/^text\/csv/)
    expect((await rig.get(`${b}/export/scoreboard.csv`)).status).toBe(200)

    // the measuring work an Engineer does: edit targets and revisions, order the strip, import a CSV
    const renamed = await rig.patch(`${b}/targets/${key}`, { name: 'Rig torque, renamed' })
    expect(renamed.status).toBe(200)
    expect((await testDb()('targets').where({ build_id: w.build.id, key }).first('name')).name).toBe('Rig torque, renamed')
    const edit = await testDb()('audit_log').where({ team_id: w.team.id, action: 'target.updated' }).orderBy('at', 'desc').first('actor_id', 'actor_label')
    expect(edit).toMatchObject({ actor_id: null, actor_label: expect.stringMatching(/^rig token /) })
    expect((await rig.patch(`${b}/revisions/RA`, { summary: 'Set by the rig' })).body.summary).toBe('Set by the rig')
    const keys = (await rig.get(`${b}/targets`)).body.map((t: any) => t.key)
    expect((await rig.post(`${b}/targets/order`, { keys: [...keys].reverse() })).status).toBe(200)
    const imported = await rig.post(`${b}/import`, await importBody(w))
    expect(imported.status).toBe(201)

    // a finding it filed: read and edited, as on the board
    const filed = await rig.post(`${b}/findings`, { title: 'Torque ripple above 5 %', severity: 'degrades' })
    expect(filed.status).toBe(201)
    expect((await rig.get(`/api/v1/findings/${filed.body.id}`)).body.title).toBe('Torque ripple above 5 %')
    const edited = await rig.patch(`/api/v1/findings/${filed.body.id}`, { version: 1, title: 'Torque ripple above 6 %' })
    expect(edited.status).toBe(200)
    expect(edited.body.version).toBe(2)

    // refused, and nothing changes: sign-off, deletion, build settings, fixes and comments, the caller's own subscription, teams
    const reading = await rig.post(`${b}/readings`, { revision: 'RA', target: key, values: [41, 42], unit: 'N·m' })
    expect(reading.status).toBe(201)
    const file = await uploadOk(rig, w.build.slug, 'ripple.txt', 'ripple log\n')
    const refusals = [
      await rig.delete(`${b}/readings/${reading.body.reading.id}`),
      await rig.post(`${b}/revisions/RA/freeze`),
      await rig.post(`${b}/revisions/RA/unfreeze`, { reason: 'a rig may not reopen a revision' }),
      await rig.patch(b, { name: 'Renamed by a rig' }),
      await rig.delete(`/api/v1/files/${file.id}`),
      await rig.post(`/api/v1/findings/${filed.body.id}/fixes`, { description: 'Stiffer coupling' }),
      await rig.post(`/api/v1/findings/${filed.body.id}/comments`, { body: 'seen again' }),
      await rig.get(`${b}/subscription`),
      await rig.post('/api/v1/teams', { name: 'Rig team' }),
    ]
    expect(refusals.map(r => r.status)).toEqual(refusals.map(() => 403))
    expect(refusals[0]!.body.message).toMatch(/own build/)
    expect(await testDb()('readings').where({ id: reading.body.reading.id }).first('id')).toBeTruthy()
    expect((await testDb()('revisions').where({ build_id: w.build.id, label: 'RA' }).first('frozen_at')).frozen_at).toBeNull()
    expect((await testDb()('builds').where({ id: w.build.id }).first('name')).name).toBe('Matrix rig')
    expect(await testDb()('files').where({ id: file.id }).first('id')).toBeTruthy()
    expect(await testDb()('fixes').where({ finding_id: filed.body.id }).first('id')).toBeUndefined()
    expect(await testDb()('finding_comments').where({ finding_id: filed.body.id }).first('id')).toBeUndefined()
  })

  it('stops working when revoked or expired, and a made-up token is a 401', async () => {
    const created = await w.owner.client.post(`/api/builds/${w.build.slug}/tokens`, { name: 'short-lived' })
    const rig = new Client()
    rig.bearer = created.body.token
    expect((await rig.get('/api/v1/builds')).status).toBe(200)
    expect((await w.owner.client.delete(`/api/builds/${w.build.slug}/tokens/${created.body.id}`)).status).toBe(204)
    expect((await rig.get('/api/v1/builds')).status).toBe(401)

    const expiring = await w.owner.client.post(`/api/builds/${w.build.slug}/tokens`, { name: 'expiring', expiresAt: new Date(Date.now() + 3600_000).toISOString() })
    expect(expiring.status).toBe(201)
    await testDb()('rig_tokens').where({ id: expiring.body.id }).update({ expires_at: testDb().raw(`now() - interval '1 second'`) })
    rig.bearer = expiring.body.token
    expect((await rig.get('/api/v1/builds')).status).toBe(401)

    rig.bearer = 'rig_made-up'
    expect((await rig.get('/api/v1/builds')).status).toBe(401)
  })

  it('refuses an expiry in the past and a missing name, and records creation and revocation', async () => {
    expect((await w.owner.client.post(`/api/builds/${w.build.slug}/tokens`, { name: 'old', expiresAt: '2020-01-01T00:00:00Z' })).status).toBe(400)
    expect((await w.owner.client.post(`/api/builds/${w.build.slug}/tokens`, { name: '' })).status).toBe(400)
    const actions = await testDb()('audit_log').where({ team_id: w.team.id }).pluck('action')
    expect(actions).toEqual(expect.arrayContaining(['rig-token.created', 'rig-token.revoked']))
  })
})
