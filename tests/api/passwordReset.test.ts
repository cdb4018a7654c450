import { afterAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, signUp, testDb, uniqueEmail } from '../support/api'
import { linkIn, mailTo, waitForMail } from '../support/maildev'
import { startMaildev, stopMaildev } from '../support/services'

const settle = (ms: number) => new Promise(r => setTimeout(r, ms))
const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b)
  return s.length % 2 ? s[(s.length - 1) / 2]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2
}

afterAll(closeTestDb)

function tokenOf(link: string) {
  return new URL(link).searchParams.get('token')!
}

describe('password reset by e-mail', () => {
  it('answers the same for a known and an unknown address', async () => {
    const known = await signUp()
    const a = await new Client().post('/api/auth/forgot', { email: known.email })
    const b = await new Client().post('/api/auth/forgot', { email: uniqueEmail('ghost') })
    expect(a.status).toBe(200)
    expect(b.status).toBe(a.status)
    expect(b.body).toEqual(a.body)
  })

  it('a reset link works once, sets the new password and ends the other sessions', async () => {
    const p = await signUp()
    const otherDevice = new Client()
    expect((await otherDevice.post('/api/auth/login', { email: p.email, password: p.password })).status).toBe(200)
    expect((await otherDevice.get('/api/account')).status).toBe(200)

    const browser = new Client()
    await browser.post('/api/auth/forgot', { email: p.email })
    const mail = await waitForMail(p.email, /new Ratchet password/)
    const token = tokenOf(linkIn(mail, '/reset-password'))
    const row = await testDb()('password_resets').where({ user_id: p.user.id }).first()
    expect(row.token_hash).toHaveLength(64)

    const newPassword = 'flywheel-balance-2207'
    const reset = await browser.post('/api/auth/reset', { token, password: newPassword })
    expect(reset.status).toBe(200)
    // the browser that reset is signed in; the other session has ended, and so has the sign-up one
    expect((await browser.get('/api/account')).status).toBe(200)
    expect((await otherDevice.get('/api/account')).status).toBe(401)
    expect((await p.client.get('/api/account')).status).toBe(401)

    expect((await new Client().post('/api/auth/login', { email: p.email, password: p.password })).status).toBe(401)
    expect((await new Client().post('/api/auth/login', { email: p.email, password: newPassword })).status).toBe(200)

    const again = await new Client().post('/api/auth/reset', { token, password: 'another-pass-99887' })
    expect(again.status).toBe(400)
  })

  it('refuses an expired link and a common password', async () => {
    const p = await signUp()
    await new Client().post('/api/auth/forgot', { email: p.email })
    const token = tokenOf(linkIn(await waitForMail(p.email, /new Ratchet password/), '/reset-password'))
    const common = await new Client().post('/api/auth/reset', { token, password: '1234567890' })
    expect(common.status).toBe(400)
    expect(common.body.message).toContain('common')

    await testDb()('password_resets').where({ user_id: p.user.id }).update({ expires_at: testDb().raw(`now() - interval '1 second'`) })
    const expired = await new Client().post('/api/auth/reset', { token, password: 'gearbox-shim-44120' })
    expect(expired.status).toBe(400)
    expect(expired.body.message).toContain('not valid')
    expect(await mailTo(uniqueEmail('ghost'))).toEqual([])
  })
})

describe('password reset under abuse and outages', () => {
  it('sends one e-mail per request, with a link that works', async () => {
    const p = await signUp()
    expect((await new Client().post('/api/auth/forgot', { email: p.email })).status).toBe(200)
    const mail = await waitForMail(p.email, /new Ratchet password/)
    await settle(2000)
    expect((await mailTo(p.email)).filter(m => /new Ratchet password/.test(m.subject))).toHaveLength(1)
    const token = tokenOf(linkIn(mail, '/reset-password'))
    const newPassword = 'bearing-preload-6204'
    expect((await new Client().post('/api/auth/reset', { token, password: newPassword })).status).toBe(200)
    expect((await new Client().post('/api/auth/login', { email: p.email, password: newPassword })).status).toBe(200)
  })

  it('throttles per address (across IPs) and per IP (across addresses) with 429 and Retry-After', async () => {
    // the limits of nuxt.config.ts: 3 requests per address, 10 per IP, in 15 minutes
    const p = await signUp()
    const statuses: number[] = []
    let last
    for (let i = 0; i < 6; i++) {
      last = await new Client().post('/api/auth/forgot', { email: p.email })
      statuses.push(last.status)
    }
    expect(statuses).toEqual([200, 200, 200, 429, 429, 429])
    const retry = Number(last!.headers.get('retry-after'))
    expect(retry).toBeGreaterThan(0)
    expect(retry).toBeLessThanOrEqual(15 * 60)
    await settle(3000)
    // the refused requests sent nothing: three e-mails, not six
    expect((await mailTo(p.email)).filter(m => /new Ratchet password/.test(m.subject))).toHaveLength(3)

    const one = new Client()
    const perIp: number[] = []
    for (let i = 0; i < 12; i++) perIp.push((await one.post('/api/auth/forgot', { email: uniqueEmail('spray') })).status)
    expect(perIp.slice(0, 10).every(s => s === 200)).toBe(true)
    expect(perIp.slice(10)).toEqual([429, 429])
  })

  it('known and unknown addresses take the same time (median of 20 each)', async () => {
    const known = []
    for (let i = 0; i < 20; i++) known.push(await signUp({ name: `Timing Person ${i} ${Date.now()}` }))
    const time = async (email: string) => {
      const started = performance.now()
      const r = await new Client().post('/api/auth/forgot', { email })
      expect(r.status).toBe(200)
      return performance.now() - started
    }
    // warm both paths, then interleave so load on the machine hits both alike
    await time(uniqueEmail('warm'))
    const a: number[] = []
    const b: number[] = []
    for (let i = 0; i < 20; i++) {
      a.push(await time(known[i]!.email))
      b.push(await time(uniqueEmail('nobody')))
    }
    const diff = Math.abs(median(a) - median(b))
    console.info(`forgot: median known ${median(a).toFixed(1)} ms, unknown ${median(b).toFixed(1)} ms`)
    expect(diff).toBeLessThan(15)
  })

  it('the answer does not wait on anything only a known address needs (its token, its audit row)', async () => {
    const p = await signUp({ name: `Locked Person ${Date.now()}` })
    // while these tables take no writes, a handler that writes them for known addresses stalls
    const trx = await testDb().transaction()
    const timed = async (email: string) => {
      const started = performance.now()
      const r = await Promise.race([
        new Client().post('/api/auth/forgot', { email }).then(x => x.status),
        settle(3000).then(() => 'still waiting'),
      ])
      return { r, ms: performance.now() - started }
    }
    let known, unknown
    try {
      await trx.raw('LOCK TABLE password_resets, audit_log IN EXCLUSIVE MODE')
      known = await timed(p.email)
      unknown = await timed(uniqueEmail('nobody'))
    }
    finally {
      await trx.rollback()
    }
    expect(known.r).toBe(200)
    expect(unknown.r).toBe(200)
    expect(known.ms).toBeLessThan(1000)
    // once the tables are free again, the queue sends the link
    await waitForMail(p.email, /new Ratchet password/, 20_000)
  })

  it('during a mail outage the request is kept, and sent exactly once after it', async () => {
    const p = await signUp({ name: `Outage Person ${Date.now()}` })
    await stopMaildev()
    try {
      expect((await new Client().post('/api/auth/forgot', { email: p.email })).status).toBe(200)
      await settle(4000)
    }
    finally {
      await startMaildev()
    }
    const mail = await waitForMail(p.email, /new Ratchet password/, 60_000)
    await settle(3000)
    expect((await mailTo(p.email)).filter(m => /new Ratchet password/.test(m.subject))).toHaveLength(1)
    // the link sent after the outage works
    const token = tokenOf(linkIn(mail, '/reset-password'))
    expect((await new Client().post('/api/auth/reset', { token, password: 'camshaft-lobe-3391' })).status).toBe(200)
  })
})
