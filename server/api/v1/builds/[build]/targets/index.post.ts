export default defineEventHandler(async (event) => {
  const { build, actorId } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer', { allowRigToken: true })
  const body = await bodyAs(event, TargetBody)
  const row = await useDb().transaction(trx => insertTarget(trx, build.id, body, actorId))
  setResponseStatus(event, 201)
  return targetView(row)
})
