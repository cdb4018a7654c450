export default defineEventHandler(async (event) => {
  const { build, role } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  return await buildTargetDetail(useDb(), build, role, textParam(event, 'key'))
})
