export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer', { allowRigToken: true })
  const label = textParam(event, 'label')
  const body = await bodyAs(event, RevisionPatch)
  const db = useDb()
  const id = await db.transaction(async (trx) => {
    const revision = await findRevision(trx, build.id, label, 'update')
    await updateRevision(trx, revision, body)
    return revision.id
  })
  const [view] = await listRevisions(db, build.id, id)
  return view
})
