// Ends every session of the signed-in user, this one included: the session version moves on,
// and every cookie carrying the old one is refused at its next request.
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const db = useDb()
  await db('users').where({ id: user.id }).update({ session_version: db.raw('session_version + 1'), updated_at: db.fn.now() })
  await audit(event, { action: 'auth.signed-out-everywhere', actorId: user.id, actorLabel: user.email })
  await clearUserSession(event)
  return { ok: true }
})
