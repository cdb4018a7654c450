import { afterAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, signUp, testDb, uniqueEmail } from '../support/api'

afterAll(closeTestDb)

describe('sign-in throttling and enumeration', () => {
  it('answers 429 with Retry-After after the fifth failure, even for the right password, until the window ends', async () => {
    const p = await signUp()
    const c = new Client()
    for (let i = 0; i < 5; i++) {
      const res = await c.post('/api/auth/login', { email: p.email, password: 'wrong-password-xx' })
      expect(res.status).toBe(401)
    }
    const blocked = await c.post('/api/auth/login', { email: p.email, password: p.password })
    expect(blocked.status).toBe(429)
    const retry = Number(blocked.headers.get('retry-after'))
    expect(retry).toBeGreaterThan(14 * 60)
    expect(retry).toBeLessThanOrEqual(15 * 60)

    // another client address is not blocked for the same account
    expect((await new Client().post('/api/auth/login', { email: p.email, password: p.password })).status).toBe(200)

    // the window passes (the counted failures age by 15 minutes)
    await testDb()('login_failures').where({ email: p.email, ip: c.ip }).update({ at: testDb().raw(`at - interval '15 minutes'`) })
    expect((await c.post('/api/auth/login', { email: p.email, password: p.password })).status).toBe(200)
  })

  it('limits one address across e-mail addresses more loosely (100 in the window)', async () => {
    const c = new Client()
    const p = await signUp()
    await testDb()('login_failures').insert(Array.from({ length: 99 }, (_, i) => ({ email: `spray-${i}@example.test`, ip: c.ip })))
    expect((await c.post('/api/auth/login', { email: uniqueEmail(), password: 'wrong-password-xx' })).status).toBe(401)
    const blocked = await c.post('/api/auth/login', { email: p.email, password: p.password })
    expect(blocked.status).toBe(429)
    expect(blocked.headers.get('retry-after')).toBeTruthy()
  })

  it('a failed sign-in looks the same for a known and an unknown address', async () => {
    const p = await signUp()
    const known = await new Client().post('/api/auth/login', { email: p.email, password: 'wrong-password-xx' })
    const unknown = await new Client().post('/api/auth/login', { email: uniqueEmail('ghost'), password: 'wrong-password-xx' })
    expect(unknown.status).toBe(known.status)
    expect(unknown.body).toEqual(known.body)

    // both paths verify a password hash; their times are alike (a loose bound: scrypt dominates)
    const time = async (email: string) => {
      const t = performance.now()
      await new Client().post('/api/auth/login', { email, password: 'wrong-password-xx' })
      return performance.now() - t
    }
    const median = (xs: number[]) => xs.sort((a, b) => a - b)[Math.floor(xs.length / 2)]!
    const k: number[] = []
    const u: number[] = []
    for (let i = 0; i < 5; i++) {
      k.push(await time(p.email))
      u.push(await time(uniqueEmail('ghost')))
    }
    const ratio = median(k) / median(u)
    expect(ratio).toBeGreaterThan(1 / 3)
    expect(ratio).toBeLessThan(3)
  })

  it('records failed sign-ins in the audit log with the address they came from', async () => {
    const p = await signUp()
    const c = new Client()
    await c.post('/api/auth/login', { email: p.email, password: 'wrong-password-xx' })
    const row = await testDb()('audit_log').where({ action: 'auth.sign-in-failed', actor_id: p.user.id }).first()
    expect(row.ip).toBe(c.ip)
  })
})
