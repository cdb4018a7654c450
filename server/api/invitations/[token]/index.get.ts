// Public: what the invitation link is for, so the page can offer sign-up or sign-in.
export default defineEventHandler(async (event) => {
  const token = getRouterParam(event, 'token') ?? ''
  const db = useDb()
  const inv = await findUsableInvitation(db, token)
  const team = (await db('teams').where({ id: inv.team_id }).first('name'))!
  const account = await db('users').whereRaw('lower(email) = ?', [inv.email.toLowerCase()]).first('id')
  return { team: team.name, email: inv.email, role: inv.role, expiresAt: inv.expires_at, hasAccount: Boolean(account) }
})
