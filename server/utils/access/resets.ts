import { passwordResetEmail } from '~~/email/passwordReset'
import { auditRow } from '../audit'
import type { Db } from '../db'
import { resetWait } from './throttle'

// "Forgot password": the request only writes a reset_requests row and nudges the queue, so a
// known address and an unknown one take the same path and the same time. The queue settles each
// row once: it looks the address up and, when an account uses it, writes a one-hour token and
// e-mails the link in the same transaction; a failed send rolls both back and the job is retried
// (pg-boss backoff, and the sweep every minute).

/** The rows one sweep settles at most; the sweep repeats until none is left. */
const BATCH = 50

export class ResetThrottled extends Error {
  constructor(public retryAfterSeconds: number) {
    super(`Too many password reset requests; try again in ${Math.ceil(retryAfterSeconds / 60)} min`)
  }
}

/** Records a reset request (throws ResetThrottled past the limits). */
export async function requestReset(db: Db, input: { email: string, ip: string, userAgent: string }) {
  const email = input.email.toLowerCase()
  const wait = await resetWait(db, email, input.ip)
  if (wait !== null) throw new ResetThrottled(wait)
  await db('reset_requests').insert({ email, ip: input.ip, user_agent: input.userAgent.slice(0, 300) })
}

/** Settles one pending request; answers false when another worker has it or it is settled. */
async function settle(db: Db, id: number): Promise<boolean> {
  return await db.transaction(async (trx) => {
    const req = await trx('reset_requests').where({ id }).whereNull('settled_at').forUpdate().skipLocked().first()
    if (!req) return false
    const user = await trx('users').whereRaw('lower(email) = ?', [req.email]).first('id', 'name', 'email')
    if (user) {
      const token = newToken()
      await trx('password_resets').insert({
        user_id: user.id,
        token_hash: hashToken(token),
        expires_at: trx.raw(`now() + interval '1 hour'`),
      })
      await trx('audit_log').insert(auditRow({ ip: req.ip, userAgent: req.user_agent }, { action: 'auth.reset-requested', actorId: user.id, actorLabel: user.email }))
      // inside the transaction: if the send fails, the token and the settling roll back
      await sendMail({ to: user.email, ...passwordResetEmail({ name: user.name, link: appLink(`/reset-password?token=${token}`) }) })
    }
    await trx('reset_requests').where({ id }).update({ settled_at: trx.fn.now() })
    return true
  })
}

/**
 * Settles the pending reset requests (the queue's job). Throws after trying them all when any
 * e-mail could not be sent, so the job is retried.
 */
export async function deliverResets(db: Db = useDb()): Promise<number> {
  // settled requests older than any throttle window are of no more use
  await db('reset_requests').whereNotNull('settled_at').where('at', '<', db.raw(`now() - interval '1 day'`)).delete()
  let settled = 0
  let failed: unknown = null
  let after = 0
  for (;;) {
    const ids = (await db('reset_requests').whereNull('settled_at').where('id', '>', after).orderBy('id').limit(BATCH).pluck('id')).map(Number)
    if (!ids.length) break
    for (const id of ids) {
      after = id
      try {
        if (await settle(db, id)) settled++
      }
      catch (err) {
        failed ??= err
      }
    }
  }
  if (failed) throw failed
  return settled
}
