export default defineEventHandler(async (event) => {
  const access = await requireFindingRole(event, 'engineer', { allowRigToken: true })
  const body = await bodyAs(event, MoveBody)
  if (body.override && access.role !== 'owner') {
    throw createError({ statusCode: 403, message: 'Only an Owner can override a lane rule' })
  }
  // the move's protocol (a lock-free try, then the board's lock) is moveFinding's
  return await moveFinding(useDb(), access.actor, { finding: access.finding, teamId: access.build.team_id, body })
})
