import { CompareQuery } from '#shared/utils/revisionSchemas'

// Two revisions of the build side by side: every target and the design parameters.
export default defineEventHandler(async (event) => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { build } = access
  return await keptAnswer(event, access, async () => {
    const { a, b } = queryAs(event, CompareQuery)
    return await compareRevisions(useDb(), build, a, b)
  })
})
