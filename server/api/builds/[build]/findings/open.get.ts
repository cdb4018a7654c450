import type { OpenFindingsByTarget } from '#shared/types/findings'

export default defineEventHandler(async (event): Promise<OpenFindingsByTarget> => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer')
  return await openFindingsByTarget(useDb(), build.id)
})
