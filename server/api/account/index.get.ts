export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const teams = await useDb()('teams')
    .join('memberships', 'memberships.team_id', 'teams.id')
    .where('memberships.user_id', user.id)
    .orderBy('teams.name')
    .select('teams.id', 'teams.name', 'teams.slug', 'teams.personal', 'memberships.role')
  return { user, teams }
})
