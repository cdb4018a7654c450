export default defineEventHandler(async (event) => {
  const body = await bodyAs(event, ResetBody)
  assertPasswordAcceptable(body.password)
  const db = useDb()
  const passwordHash = await hashPassword(body.password)

  const user = await db.transaction(async (trx) => {
    const reset = await trx('password_resets').where({ token_hash: hashToken(body.token) }).forUpdate().first()
    if (!reset || reset.used_at || new Date(reset.expires_at).getTime() < Date.now()) {
      throw createError({ statusCode: 400, message: 'This reset link is not valid any more; ask for a new one' })
    }
    await trx('password_resets').where({ id: reset.id }).update({ used_at: trx.fn.now() })
    // every other open reset link of this user dies with it
    await trx('password_resets').where({ user_id: reset.user_id }).whereNull('used_at').update({ used_at: trx.fn.now() })
    const user = theRow(await trx('users').where({ id: reset.user_id })
      .update({ password_hash: passwordHash, session_version: trx.raw('session_version + 1'), updated_at: trx.fn.now() })
      .returning(['id', 'name', 'email', 'session_version']))
    await audit(event, { action: 'auth.password-reset', actorId: user.id, actorLabel: user.email }, trx)
    return user
  })

  // other sessions carry the old session_version and end at their next request
  await startSession(event, user)
  return { user: { id: user.id, name: user.name, email: user.email } }
})
