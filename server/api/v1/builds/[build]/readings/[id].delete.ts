export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const { build, actorId, actorLabel } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer')
  const id = uuidParam(event, 'id')
  await useDb().transaction(async (trx) => {
    const gone = await deleteReading(trx, { buildId: build.id, id })
    await audit(event, { action: 'reading.deleted', teamId: build.team_id, actorId, actorLabel, detail: { build: build.slug, target: gone.target.key, revision: gone.revision, n: gone.n } }, trx)
  })
  setResponseStatus(event, 204)
  return null
})
