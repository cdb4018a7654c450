export default defineEventHandler(async (event) => {
  const { team, user } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'owner')
  const id = uuidParam(event, 'id')
  return await useDb().transaction(async (trx) => {
    const inv = await trx('invitations').where({ id, team_id: team.id }).whereNull('accepted_at').whereNull('cancelled_at').forUpdate().first()
    if (!inv) throw createError({ statusCode: 404, message: 'Invitation not found' })
    await issueInvitation(event, trx, { invitationId: inv.id, email: inv.email, role: inv.role, team, inviter: user })
    await audit(event, { action: 'invitation.resent', teamId: team.id, actorId: user.id, actorLabel: user.email, detail: { email: inv.email } }, trx)
    return trx('invitations').where({ id }).first('id', 'email', 'role', 'expires_at as expiresAt')
  })
})
