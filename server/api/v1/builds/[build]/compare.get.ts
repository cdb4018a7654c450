import { CompareQuery } from '#shared/utils/revisionSchemas'

// Two revisions of the build side by side: every target and the design parameters.
export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { a, b } = queryAs(event, CompareQuery)
  return await compareRevisions(useDb(), build, a, b)
})
