export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const user = await requireUser(event)
  return await useDb()('teams')
    .join('memberships', 'memberships.team_id', 'teams.id')
    .where('memberships.user_id', user.id)
    .orderBy('teams.name')
    .select('teams.id', 'teams.name', 'teams.slug', 'memberships.role')
})
