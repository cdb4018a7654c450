import type { BuildDetail } from '#shared/types/api'

export default defineEventHandler(async (event): Promise<BuildDetail> => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { build, role } = access
  return await keptAnswer(event, access, async () => {
    const team = (await useDb()('teams').where({ id: build.team_id }).first('id', 'slug', 'name'))!
    return { ...buildView(build), teamId: build.team_id, role, team }
  })
})
