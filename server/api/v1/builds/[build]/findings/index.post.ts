export default defineEventHandler(async (event) => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer', { allowRigToken: true })
  const body = await bodyAs(event, FindingCreate)
  const finding = await useDb().transaction(trx => createFinding(trx, access.actor, { buildId: access.build.id, body }))
  setResponseStatus(event, 201)
  return finding
})
