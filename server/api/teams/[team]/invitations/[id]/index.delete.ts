export default defineEventHandler(async (event) => {
  const { team, user } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'owner')
  const id = uuidParam(event, 'id')
  await useDb().transaction(async (trx) => {
    const [inv] = await trx('invitations').where({ id, team_id: team.id }).whereNull('accepted_at').whereNull('cancelled_at')
      .update({ cancelled_at: trx.fn.now() }).returning(['email'])
    if (!inv) throw createError({ statusCode: 404, message: 'Invitation not found' })
    await audit(event, { action: 'invitation.cancelled', teamId: team.id, actorId: user.id, actorLabel: user.email, detail: { email: inv.email } }, trx)
  })
  setResponseStatus(event, 204)
  return null
})
