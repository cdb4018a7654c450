import { passwordResetEmail } from '~~/email/passwordReset'

const ANSWER = { ok: true, message: 'If an account uses this address, we have sent it a link to choose a new password. The link works once, for one hour.' }

export default defineEventHandler(async (event) => {
  const { email } = await bodyAs(event, ForgotBody)
  const db = useDb()
  const user = await db('users').whereRaw('lower(email) = ?', [email]).first('id', 'name', 'email')
  const token = newToken()
  if (user) {
    await db('password_resets').insert({
      user_id: user.id,
      token_hash: hashToken(token),
      expires_at: db.raw(`now() + interval '1 hour'`),
    })
    await audit(event, { action: 'auth.reset-requested', actorId: user.id, actorLabel: user.email })
    // not awaited: the answer must not take longer when the address exists
    sendMail({ to: user.email, ...passwordResetEmail({ name: user.name, link: appLink(`/reset-password?token=${token}`) }) })
      .catch(err => console.error('reset e-mail failed', err))
  }
  return ANSWER
})
