export default defineEventHandler(async (event) => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { build } = access
  return await keptAnswer(event, access, async () => {
    const query = queryAs(event, FindingListQuery)
    return await listFindings(useDb(), build.id, query)
  })
})
