export default defineEventHandler(async (event) => {
  const { team } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'reviewer')
  return await useDb()('memberships')
    .join('users', 'users.id', 'memberships.user_id')
    .where('memberships.team_id', team.id)
    .orderBy('users.name')
    .select('users.id', 'users.name', 'users.email', 'memberships.role', 'memberships.created_at as joinedAt')
})
