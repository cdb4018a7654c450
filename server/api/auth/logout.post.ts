// Signing out ends this session on the server too: its id is recorded as revoked, so a copy
// of the cookie is refused from now on (the user's other sessions go on).
export default defineEventHandler(async (event) => {
  const session = await getUserSession(event)
  const sid = sessionId(session)
  if (session.user && sid) {
    const db = useDb()
    const maxAge = Number(useRuntimeConfig().session.maxAge) || 60 * 60 * 24 * 14
    await db('revoked_sessions')
      .insert({ sid, user_id: session.user.id, expires_at: db.raw(`now() + make_interval(secs => ?)`, [maxAge]) })
      .onConflict('sid').ignore()
    // rows whose cookies have expired by now guard nothing
    await db('revoked_sessions').where('expires_at', '<', db.fn.now()).delete()
  }
  await clearUserSession(event)
  return { ok: true }
})
