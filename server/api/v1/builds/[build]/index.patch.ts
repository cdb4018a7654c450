export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const { build, user } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer')
  const body = await bodyAs(event, BuildPatch)
  const row = await useDb().transaction(async (trx) => {
    const changes: Record<string, unknown> = { updated_at: trx.fn.now() }
    if (body.name !== undefined) changes.name = body.name
    if (body.summary !== undefined) changes.summary = body.summary
    if (body.archived === true && !build.archived_at) changes.archived_at = trx.fn.now()
    if (body.archived === false) changes.archived_at = null
    const row = theRow(await trx('builds').where({ id: build.id }).update(changes)
      .returning(['id', 'name', 'slug', 'summary', 'archived_at', 'created_at']))
    const action = body.archived === true && !build.archived_at ? 'build.archived' : body.archived === false && build.archived_at ? 'build.restored' : 'build.updated'
    await audit(event, { action, teamId: build.team_id, actorId: user!.id, actorLabel: user!.email, detail: { build: build.slug, fields: Object.keys(body) } }, trx)
    return row
  })
  return buildView(row)
})
