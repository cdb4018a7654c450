import type { OpenFindingsByTarget } from '#shared/types/findings'

export default defineEventHandler(async (event): Promise<OpenFindingsByTarget> => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { build, role } = access
  return await keptAnswer(event, access, async () => ({ canFile: role !== 'reviewer', byTarget: await openFindingsByTarget(useDb(), build.id) }))
})
