export default defineEventHandler(async (event) => {
  const { team, user, actor } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'owner')
  const id = uuidParam(event, 'id')
  return await useDb().transaction(async (trx) => {
    const inv = await trx('invitations').where({ id, team_id: team.id }).whereNull('accepted_at').whereNull('cancelled_at').forUpdate().first()
    if (!inv) throw createError({ statusCode: 404, message: 'Invitation not found' })
    await issueInvitation(trx, actor, { invitationId: inv.id, email: inv.email, role: inv.role, team })
    await audit(event, { action: 'invitation.resent', teamId: team.id, actorId: user.id, actorLabel: user.email, detail: { email: inv.email } }, trx)
    return trx('invitations').where({ id }).first('id', 'email', 'role', 'expires_at as expiresAt')
  })
})
