import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, testDb, type World } from '../support/api'

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
