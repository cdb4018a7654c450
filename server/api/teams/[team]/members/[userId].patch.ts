export default defineEventHandler(async (event) => {
  const { team, user } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'owner')
  const memberId = uuidParam(event, 'userId')
  const { role } = await bodyAs(event, RoleBody)
  return await useDb().transaction(async (trx) => {
    const member = await trx('memberships').join('users', 'users.id', 'memberships.user_id')
      .where({ team_id: team.id, user_id: memberId }).forUpdate('memberships').first('memberships.role', 'users.email')
    if (!member) throw createError({ statusCode: 404, message: 'Member not found' })
    if (member.role === 'owner' && role !== 'owner') await assertKeepsAnOwner(trx, team.id, memberId)
    await trx('memberships').where({ team_id: team.id, user_id: memberId }).update({ role, updated_at: trx.fn.now() })
    await audit(event, { action: 'member.role-changed', teamId: team.id, actorId: user.id, actorLabel: user.email, detail: { member: member.email, from: member.role, to: role } }, trx)
    return { id: memberId, role }
  })
})
