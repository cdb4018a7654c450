export default defineEventHandler(async (event) => {
  const { build, user, rigTokenId } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer', { allowRigToken: true })
  const body = await bodyAs(event, ReadingBody)
  const created = await useDb().transaction(trx => insertReading(trx, build.id, body, { userId: user?.id ?? null, rigTokenId }))
  setResponseStatus(event, 201)
  return created
})
