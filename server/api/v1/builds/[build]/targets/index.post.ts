export default defineEventHandler(async (event) => {
  const { build, actor } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer', { allowRigToken: true })
  const body = await bodyAs(event, TargetBody)
  const row = await useDb().transaction(trx => insertTarget(trx, actor, { buildId: build.id, body }))
  setResponseStatus(event, 201)
  return targetView(row)
})
