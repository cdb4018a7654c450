import type { OpenFindingsByTarget } from '#shared/types/findings'

export default defineEventHandler(async (event): Promise<OpenFindingsByTarget> => {
  const { build, role } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  return { canFile: role !== 'reviewer', byTarget: await openFindingsByTarget(useDb(), build.id) }
})
