export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const body = await bodyAs(event, PasswordChangeBody)
  const db = useDb()
  const row = (await db('users').where({ id: user.id }).first('password_hash'))!
  if (!await verifyPassword(row.password_hash, body.currentPassword)) {
    throw createError({ statusCode: 400, message: 'currentPassword: The current password is wrong', data: { fields: { currentPassword: 'The current password is wrong' } } })
  }
  assertPasswordAcceptable(body.newPassword)
  const updated = theRow(await db('users').where({ id: user.id })
    .update({ password_hash: await hashPassword(body.newPassword), session_version: db.raw('session_version + 1'), updated_at: db.fn.now() })
    .returning(['id', 'name', 'email', 'session_version']))
  await audit(event, { action: 'auth.password-changed', actorId: user.id, actorLabel: user.email })
  // this browser stays signed in; others end
  await startSession(event, updated)
  return { ok: true }
})
