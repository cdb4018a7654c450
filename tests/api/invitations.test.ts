import { afterAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, signUp, testDb, TEST_PASSWORD, uniqueEmail } from '../support/api'
import { linkIn, mailTo, waitForMail } from '../support/maildev'

afterAll(closeTestDb)

function tokenOf(link: string) {
  return decodeURIComponent(new URL(link).pathname.split('/').pop()!)
}

describe('invitations by e-mail', () => {
  it('a new person accepts by signing up, joins with the invited role, and the link works once', async () => {
    const owner = await signUp({ name: 'Inviting Owner' })
    const email = uniqueEmail('newbie')
    const sent = await owner.client.post(`/api/teams/${owner.team.slug}/invitations`, { email, role: 'reviewer' })
    expect(sent.status).toBe(201)

    const mail = await waitForMail(email, /invited you/)
    expect(mail.subject).toContain('Inviting Owner')
    const token = tokenOf(linkIn(mail, '/invitations/'))
    // only the hash is stored
    const row = await testDb()('invitations').where({ id: sent.body.id }).first()
    expect(row.token_hash).toHaveLength(64)
    expect(row.token_hash).not.toContain(token)

    const info = await new Client().get(`/api/invitations/${token}`)
    expect(info.body).toMatchObject({ email, role: 'reviewer', hasAccount: false })

    const newbie = new Client()
    const su = await newbie.post('/api/auth/signup', { name: 'New Bee', email, password: TEST_PASSWORD, invitation: token })
    expect(su.status).toBe(201)
    const teams = await newbie.get('/api/v1/teams')
    expect(teams.body.find((t: any) => t.slug === owner.team.slug)?.role).toBe('reviewer')

    // used: refused the second time
    const again = await newbie.post(`/api/invitations/${token}/accept`)
    expect(again.status).toBe(410)
  })

  it('an existing person accepts after signing in; another account cannot use the link', async () => {
    const owner = await signUp()
    const invitee = await signUp()
    const stranger = await signUp()
    await owner.client.post(`/api/teams/${owner.team.slug}/invitations`, { email: invitee.email.toUpperCase(), role: 'engineer' })
    const token = tokenOf(linkIn(await waitForMail(invitee.email, /invited you/), '/invitations/'))

    const wrong = await stranger.client.post(`/api/invitations/${token}/accept`)
    expect(wrong.status).toBe(403)
    expect(wrong.body.message).toContain('sign in with that address')

    const ok = await invitee.client.post(`/api/invitations/${token}/accept`)
    expect(ok.status).toBe(200)
    expect(ok.body.team.slug).toBe(owner.team.slug)
  })

  it('refuses an expired link, a cancelled one, and a made-up one', async () => {
    const owner = await signUp()
    const invitee = await signUp()
    const sent = await owner.client.post(`/api/teams/${owner.team.slug}/invitations`, { email: invitee.email, role: 'engineer' })
    const token = tokenOf(linkIn(await waitForMail(invitee.email, /invited you/), '/invitations/'))
    await testDb()('invitations').where({ id: sent.body.id }).update({ expires_at: testDb().raw(`now() - interval '1 minute'`) })
    const expired = await invitee.client.post(`/api/invitations/${token}/accept`)
    expect(expired.status).toBe(410)
    expect(expired.body.message).toContain('expired')

    // resend issues a fresh link and expiry; the old link is dead
    const resent = await owner.client.post(`/api/teams/${owner.team.slug}/invitations/${sent.body.id}/resend`)
    expect(resent.status).toBe(200)
    const mails = await mailTo(invitee.email)
    expect(mails.length).toBe(2)
    const fresh = tokenOf(linkIn(mails.at(-1)!, '/invitations/'))
    expect(fresh).not.toBe(token)
    expect((await invitee.client.post(`/api/invitations/${token}/accept`)).status).toBe(404)

    expect((await owner.client.delete(`/api/teams/${owner.team.slug}/invitations/${sent.body.id}`)).status).toBe(204)
    expect((await invitee.client.post(`/api/invitations/${fresh}/accept`)).status).toBe(404)
    expect((await invitee.client.get('/api/invitations/made-up-token-123')).status).toBe(404)
  })

  it('won\'t invite a member again, and validates the address and role', async () => {
    const owner = await signUp()
    expect((await owner.client.post(`/api/teams/${owner.team.slug}/invitations`, { email: owner.email, role: 'engineer' })).status).toBe(409)
    expect((await owner.client.post(`/api/teams/${owner.team.slug}/invitations`, { email: 'nope', role: 'engineer' })).status).toBe(400)
    expect((await owner.client.post(`/api/teams/${owner.team.slug}/invitations`, { email: uniqueEmail(), role: 'admin' })).status).toBe(400)
  })
})
