export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  return await listRevisions(useDb(), build.id)
})
