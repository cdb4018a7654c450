export default defineEventHandler(async (event) => {
  const { build, user } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer')
  const id = uuidParam(event, 'id')
  await useDb().transaction(async (trx) => {
    const [row] = await trx('rig_tokens').where({ id, build_id: build.id }).whereNull('revoked_at')
      .update({ revoked_at: trx.fn.now() }).returning(['name', 'prefix'])
    if (!row) throw createError({ statusCode: 404, message: 'Token not found' })
    await audit(event, { action: 'rig-token.revoked', teamId: build.team_id, actorId: user!.id, actorLabel: user!.email, detail: { build: build.slug, name: row.name, prefix: row.prefix } }, trx)
  })
  setResponseStatus(event, 204)
  return null
})
