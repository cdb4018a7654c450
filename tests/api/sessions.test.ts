import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { addMember, Client, closeTestDb, makeWorld, signUp, testDb, type World } from '../support/api'
import { uploadOk } from '../support/files'

describe('sessions and roles', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  it('after signing out, a replayed copy of the cookie is refused; other sessions of the user go on', async () => {
    const p = await signUp({ name: 'Leaving Person' })
    const other = new Client()
    expect((await other.post('/api/auth/login', { email: p.email, password: p.password })).status).toBe(200)
    const copy = p.client.cookie
    expect((await p.client.post('/api/auth/logout')).status).toBe(200)
    const replay = new Client()
    replay.cookie = copy
    expect((await replay.get('/api/account')).status).toBe(401)
    expect((await replay.post('/api/v1/teams', { name: 'After sign-out' })).status).toBe(401)
    expect((await other.get('/api/account')).status).toBe(200)
  })

  it('a renamed account’s earlier cookie is ended by signing out too', async () => {
    const p = await signUp({ name: 'Renaming Person' })
    const earlier = p.client.cookie
    expect((await p.client.patch('/api/account', { name: 'Renamed Person' })).status).toBe(200)
    expect(p.client.cookie).not.toBe(earlier)
    expect((await p.client.post('/api/auth/logout')).status).toBe(200)
    const replay = new Client()
    replay.cookie = earlier
    expect((await replay.get('/api/account')).status).toBe(401)
  })

  it('sign out everywhere ends every session of the user', async () => {
    const p = await signUp({ name: 'Careful Person' })
    const other = new Client()
    expect((await other.post('/api/auth/login', { email: p.email, password: p.password })).status).toBe(200)
    const copy = p.client.cookie
    expect((await p.client.post('/api/account/sign-out-everywhere')).status).toBe(200)
    const replay = new Client()
    replay.cookie = copy
    expect((await replay.get('/api/account')).status).toBe(401)
    expect((await other.get('/api/account')).status).toBe(401)
    // signing in again works
    const again = new Client()
    expect((await again.post('/api/auth/login', { email: p.email, password: p.password })).status).toBe(200)
    expect((await again.get('/api/account')).status).toBe(200)
  })

  it('an Engineer made a Reviewer can no longer delete a file they uploaded', async () => {
    const p = await signUp({ name: 'Demoted Engineer' })
    await addMember(w.team.id, p.user.id, 'engineer')
    const f = await uploadOk(p.client, w.build.slug, 'mine.txt', 'uploaded while an engineer')
    await testDb()('memberships').where({ team_id: w.team.id, user_id: p.user.id }).update({ role: 'reviewer' })
    const res = await p.client.delete(`/api/v1/files/${f.id}`)
    expect(res.status).toBe(403)
    expect(await testDb()('files').where({ id: f.id }).first('id')).toBeTruthy()
    await testDb()('memberships').where({ team_id: w.team.id, user_id: p.user.id }).update({ role: 'engineer' })
    expect((await p.client.delete(`/api/v1/files/${f.id}`)).status).toBe(204)
  })
})
