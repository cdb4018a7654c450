export default defineEventHandler(async (event) => {
  const { team, user, actor } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'owner')
  const body = await bodyAs(event, InviteBody)
  const invitation = await useDb().transaction(async (trx) => {
    const member = await trx('memberships').join('users', 'users.id', 'memberships.user_id')
      .where('memberships.team_id', team.id).whereRaw('lower(users.email) = ?', [body.email]).first('users.id')
    if (member) throw createError({ statusCode: 409, message: `${body.email} is already a member of this team`, data: { fields: { email: 'Already a member' } } })
    // a new invitation to the same address replaces the pending one
    await trx('invitations').where({ team_id: team.id }).whereRaw('lower(email) = ?', [body.email])
      .whereNull('accepted_at').whereNull('cancelled_at').update({ cancelled_at: trx.fn.now() })
    const inv = theRow(await trx('invitations').insert({
      team_id: team.id,
      email: body.email,
      role: body.role,
      token_hash: hashToken(newToken()),
      invited_by: user.id,
      expires_at: trx.fn.now(),
    }).returning(['id', 'email', 'role']))
    await issueInvitation(trx, actor, { invitationId: inv.id, email: inv.email, role: inv.role, team })
    await audit(event, { action: 'invitation.sent', teamId: team.id, actorId: user.id, actorLabel: user.email, detail: { email: inv.email, role: inv.role } }, trx)
    return trx('invitations').where({ id: inv.id }).first('id', 'email', 'role', 'expires_at as expiresAt', 'created_at as createdAt')
  })
  setResponseStatus(event, 201)
  return invitation
})
