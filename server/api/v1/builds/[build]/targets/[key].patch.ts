export default defineEventHandler(async (event) => {
  const { build, actorId, actorLabel } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer', { allowRigToken: true })
  const key = textParam(event, 'key')
  const body = await bodyAs(event, TargetPatch)
  const row = await useDb().transaction(async (trx) => {
    const target = await findTarget(trx, build.id, key, true)
    const row = await updateTarget(trx, { target, patch: body })
    const action = body.archived === true && !target.archived_at ? 'target.archived' : body.archived === false && target.archived_at ? 'target.restored' : 'target.updated'
    await audit(event, { action, teamId: build.team_id, actorId, actorLabel, detail: { build: build.slug, target: key, fields: Object.keys(body) } }, trx)
    return row
  })
  return targetView(row)
})
