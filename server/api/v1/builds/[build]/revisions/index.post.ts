export default defineEventHandler(async (event) => {
  const { build, user } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer', { allowRigToken: true })
  const body = await bodyAs(event, RevisionBody)
  const revision = await useDb().transaction(trx => insertRevision(trx, build.id, body, user?.id ?? null))
  setResponseStatus(event, 201)
  return revision
})
