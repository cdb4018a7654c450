import { afterAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, signUp, testDb, uniqueEmail } from '../support/api'
import { linkIn, mailTo, waitForMail } from '../support/maildev'

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
