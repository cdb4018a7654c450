import { afterAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, signUp, testDb, TEST_PASSWORD, uniqueEmail } from '../support/api'

afterAll(closeTestDb)

async function counts() {
  const db = testDb()
  const [u, t, m] = await Promise.all([db('users').count({ n: '*' }).first(), db('teams').count({ n: '*' }).first(), db('memberships').count({ n: '*' }).first()])
  return { users: Number(u!.n), teams: Number(t!.n), memberships: Number(m!.n) }
}

describe('sign up', () => {
  it('creates the account with a personal team, signs in, and keeps the session', async () => {
    const c = new Client()
    const email = uniqueEmail('ada')
    const res = await c.post('/api/auth/signup', { name: 'Ada Bench', email, password: TEST_PASSWORD })
    expect(res.status).toBe(201)
    expect(res.body.user.email).toBe(email)
    const me = await c.get('/api/account')
    expect(me.status).toBe(200)
    expect(me.body.teams).toHaveLength(1)
    expect(me.body.teams[0]).toMatchObject({ personal: true, role: 'owner', name: 'Ada Bench\'s team' })
  })

  it('compares e-mail addresses case-insensitively', async () => {
    const email = uniqueEmail('case')
    await signUp({ email })
    const again = await new Client().post('/api/auth/signup', { name: 'Twin', email: email.toUpperCase(), password: TEST_PASSWORD })
    expect(again.status).toBe(409)
    const login = await new Client().post('/api/auth/login', { email: email.toUpperCase(), password: TEST_PASSWORD })
    expect(login.status).toBe(200)
  })

  it.each([
    ['a short password', { password: 'short1' }, 'password: Use at least 10 characters'],
    ['a common password', { password: 'qwertyuiop' }, 'common passwords'],
    ['a common password in other case', { password: 'PASSWORD123' }, 'common passwords'],
    ['no e-mail', { email: undefined }, 'email'],
    ['a malformed e-mail', { email: 'not-an-address' }, 'email: That is not an e-mail address'],
    ['an over-long name', { name: 'x'.repeat(121) }, 'name: A name has at most 120 characters'],
    ['an over-long e-mail', { email: `${'x'.repeat(250)}@example.test` }, 'email'],
    ['a number for a name', { name: 42 }, 'name'],
    ['a password of 201 characters', { password: 'p'.repeat(201) }, 'password: Use at most 200 characters'],
  ])('refuses %s with a 400 and changes nothing', async (_label, override, message) => {
    const before = await counts()
    const body: Record<string, unknown> = { name: 'Bad Input', email: uniqueEmail('bad'), password: TEST_PASSWORD, ...override }
    const res = await new Client().post('/api/auth/signup', body)
    expect(res.status).toBe(400)
    expect(res.body.message).toContain(message)
    expect(await counts()).toEqual(before)
  })

  it('refuses a body that is not JSON', async () => {
    const res = await new Client().post('/api/auth/signup', '{"name": "half', { 'content-type': 'application/json' })
    expect(res.status).toBe(400)
    expect(typeof res.body.message).toBe('string')
  })
})

describe('sessions', () => {
  it('sign-out ends the session', async () => {
    const { client } = await signUp()
    expect((await client.post('/api/auth/logout')).status).toBe(200)
    expect((await client.get('/api/account')).status).toBe(401)
  })

  it('a forged or tampered cookie is a 401 and changes nothing', async () => {
    const { client } = await signUp()
    const forged = new Client()
    forged.cookie = 'nuxt-session=Fe26.2**forged**value'
    expect((await forged.get('/api/account')).status).toBe(401)

    const tampered = new Client()
    const value = client.cookie.split('=').slice(1).join('=')
    tampered.cookie = `nuxt-session=${value.slice(0, -6)}AAAAAA`
    const before = await counts()
    expect((await tampered.post('/api/v1/teams', { name: 'Sneaky' })).status).toBe(401)
    expect(await counts()).toEqual(before)
  })

  it('each cookie opens its own session, however often the server has seen it', async () => {
    // the server keeps opened cookies (server/plugins/sessionCache.ts): interleave two people
    const a = await signUp()
    const b = await signUp()
    for (let round = 0; round < 3; round++) {
      const [ra, rb] = await Promise.all([a.client.get('/api/account'), b.client.get('/api/account')])
      expect([ra.status, rb.status]).toEqual([200, 200])
      expect(ra.body.user.email).toBe(a.email)
      expect(rb.body.user.email).toBe(b.email)
    }
  })

  it('renews the session cookie at sign-in', async () => {
    const p = await signUp()
    const c = new Client()
    const first = await c.post('/api/auth/login', { email: p.email, password: p.password })
    const cookie1 = c.cookie
    await c.post('/api/auth/login', { email: p.email, password: p.password })
    expect(first.status).toBe(200)
    expect(c.cookie).not.toBe(cookie1)
  })
})

describe('teams and members', () => {
  it('creates more teams; an Owner changes roles; the last Owner cannot leave or be demoted', async () => {
    const owner = await signUp()
    const other = await signUp()
    const team = await owner.client.post('/api/v1/teams', { name: 'Dyno Crew' })
    expect(team.status).toBe(201)
    expect(team.body.slug).toMatch(/^dyno-crew/)
    await testDb()('memberships').insert({ team_id: team.body.id, user_id: other.user.id, role: 'reviewer' })

    const promote = await owner.client.patch(`/api/teams/${team.body.slug}/members/${other.user.id}`, { role: 'engineer' })
    expect(promote.status).toBe(200)

    const demoteSelf = await owner.client.patch(`/api/teams/${team.body.slug}/members/${owner.user.id}`, { role: 'engineer' })
    expect(demoteSelf.status).toBe(409)
    expect(demoteSelf.body.message).toContain('at least one Owner')
    const leave = await owner.client.delete(`/api/teams/${team.body.slug}/members/${owner.user.id}`)
    expect(leave.status).toBe(409)

    // with a second Owner, the first may step down
    await owner.client.patch(`/api/teams/${team.body.slug}/members/${other.user.id}`, { role: 'owner' })
    expect((await owner.client.patch(`/api/teams/${team.body.slug}/members/${owner.user.id}`, { role: 'engineer' })).status).toBe(200)

    const audit = await testDb()('audit_log').where({ team_id: team.body.id, action: 'member.role-changed' }).select('detail')
    expect(audit.map(a => a.detail.to)).toEqual(expect.arrayContaining(['engineer', 'owner']))
  })

  it('a bad role is a 400 naming the field; an unknown member a 404', async () => {
    const owner = await signUp()
    const res = await owner.client.patch(`/api/teams/${owner.team.slug}/members/${owner.user.id}`, { role: 'boss' })
    expect(res.status).toBe(400)
    expect(res.body.data.fields.role).toBeTruthy()
    expect((await owner.client.patch(`/api/teams/${owner.team.slug}/members/00000000-0000-4000-8000-000000000000`, { role: 'engineer' })).status).toBe(404)
    expect((await owner.client.patch(`/api/teams/${owner.team.slug}/members/not-a-uuid`, { role: 'engineer' })).status).toBe(404)
  })

  it('a team outside the caller\'s is a 404, not a 403', async () => {
    const a = await signUp()
    const b = await signUp()
    const res = await b.client.get(`/api/teams/${a.team.slug}/members`)
    expect(res.status).toBe(404)
  })

  it('Owners see the audit log with who, what and from where', async () => {
    const owner = await signUp()
    await owner.client.post(`/api/teams/${owner.team.slug}/invitations`, { email: uniqueEmail('aud'), role: 'engineer' })
    const log = await owner.client.get(`/api/teams/${owner.team.slug}/audit`)
    expect(log.status).toBe(200)
    const sent = log.body.entries.find((e: any) => e.action === 'invitation.sent')
    expect(sent).toMatchObject({ actor: owner.email, ip: owner.client.ip })
    expect(sent.detail.role).toBe('engineer')
  })
})
