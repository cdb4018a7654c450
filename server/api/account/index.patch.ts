export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const body = await bodyAs(event, AccountBody)
  const row = theRow(await useDb()('users').where({ id: user.id })
    .update({ name: body.name, updated_at: useDb().fn.now() })
    .returning(['id', 'name', 'email', 'session_version']))
  await startSession(event, row, sessionId(await getUserSession(event)))
  return { user: { id: row.id, name: row.name, email: row.email } }
})
