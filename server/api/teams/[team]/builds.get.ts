export default defineEventHandler(async (event) => {
  const { team } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'reviewer')
  return await useDb()('builds').where({ team_id: team.id }).whereNull('archived_at').orderBy('created_at', 'desc')
    .select('id', 'name', 'slug', 'summary', 'created_at as createdAt')
})
