import type { BuildDetail } from '#shared/types/api'

export default defineEventHandler(async (event): Promise<BuildDetail> => {
  const { build, role } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const team = (await useDb()('teams').where({ id: build.team_id }).first('id', 'slug', 'name'))!
  return { ...buildView(build), teamId: build.team_id, role, team }
})
