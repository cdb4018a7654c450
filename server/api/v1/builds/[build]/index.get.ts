export default defineEventHandler(async (event) => {
  const { build, role } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  return { id: build.id, name: build.name, slug: build.slug, summary: build.summary, teamId: build.team_id, archived: Boolean(build.archived_at), role }
})
