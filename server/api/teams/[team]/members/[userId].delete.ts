export default defineEventHandler(async (event) => {
  const memberId = uuidParam(event, 'userId')
  const me = await requireUser(event)
  // anyone may leave a team; removing someone else takes an Owner
  const { team, user } = await requireTeamRole(event, getRouterParam(event, 'team')!, memberId === me.id ? 'reviewer' : 'owner')
  await useDb().transaction(async (trx) => {
    const member = await trx('memberships').join('users', 'users.id', 'memberships.user_id')
      .where({ team_id: team.id, user_id: memberId }).first('memberships.role', 'users.email')
    if (!member) throw createError({ statusCode: 404, message: 'Member not found' })
    if (member.role === 'owner') await assertKeepsAnOwner(trx, team.id, memberId)
    await trx('memberships').where({ team_id: team.id, user_id: memberId }).delete()
    await audit(event, { action: 'member.removed', teamId: team.id, actorId: user.id, actorLabel: user.email, detail: { member: member.email, role: member.role } }, trx)
  })
  setResponseStatus(event, 204)
  return null
})
