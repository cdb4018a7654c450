export default defineEventHandler(async (event) => {
  const { build, actor } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer', { allowRigToken: true })
  const body = await bodyAs(event, ReadingBody)
  const created = await useDb().transaction(trx => insertReading(trx, actor, { buildId: build.id, body }))
  setResponseStatus(event, 201)
  return created
})
