export default defineEventHandler(async (event) => {
  const { build, role } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  return await buildBoard(useDb(), build, role)
})
