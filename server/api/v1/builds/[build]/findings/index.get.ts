export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const query = queryAs(event, FindingListQuery)
  return await listFindings(useDb(), build.id, query)
})
