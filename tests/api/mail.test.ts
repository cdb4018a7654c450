import { describe, expect, it } from 'vitest'
import { createMailer } from '../../server/utils/mailer'
import { testMessage } from '../../email/testMessage'
import { waitForMail } from '../support/maildev'

describe('the mail path', () => {
  it('a message sent through mailer.ts is read back from maildev', async () => {
    const mailer = createMailer({
      host: '127.0.0.1',
      port: process.env.NUXT_SMTP_PORT ?? 1125,
      secure: false,
      from: 'Ratchet <ratchet@localhost>',
    })
    const to = `mailpath-${Date.now()}@example.test`
    const msg = testMessage({ teamName: 'Bench crew', senderName: 'Test runner' })
    await mailer.send({ to, ...msg })
    mailer.close()

    const got = await waitForMail(to, 'Ratchet test message')
    expect(got.text).toContain('Bench crew')
    expect(got.html).toContain('Mail from Ratchet reaches you')
  })
})
