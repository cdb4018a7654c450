export default defineEventHandler(async (event) => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { build, role } = access
  return await keptAnswer(event, access, () => buildTargetDetail(useDb(), build, role, textParam(event, 'key')))
})
