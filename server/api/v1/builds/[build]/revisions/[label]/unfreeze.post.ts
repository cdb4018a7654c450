export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const { build, user } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'owner')
  const label = textParam(event, 'label')
  const { reason } = await bodyAs(event, UnfreezeBody)
  const db = useDb()
  const id = await db.transaction(async (trx) => {
    const revision = await findRevision(trx, build.id, label, 'update')
    await unfreezeRevision(trx, revision)
    await audit(event, { action: 'revision.unfrozen', teamId: build.team_id, actorId: user!.id, actorLabel: user!.email, detail: { build: build.slug, revision: revision.label, reason } }, trx)
    return revision.id
  })
  const [view] = await listRevisions(db, build.id, id)
  return view
})
