import type { BuildDetail } from '#shared/types/api'

export default defineEventHandler(async (event): Promise<BuildDetail> => {
  const { build, role } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer')
  const team = (await useDb()('teams').where({ id: build.team_id }).first('id', 'slug', 'name'))!
  return { ...buildView(build), role, team }
})
