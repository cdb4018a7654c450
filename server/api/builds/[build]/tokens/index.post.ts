export default defineEventHandler(async (event) => {
  const { build, user } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer')
  const body = await bodyAs(event, RigTokenBody)
  if (body.expiresAt && new Date(body.expiresAt).getTime() <= Date.now()) {
    throw createError({ statusCode: 400, message: 'expiresAt: The expiry must be in the future', data: { fields: { expiresAt: 'Must be in the future' } } })
  }
  const token = newToken('rig_')
  const row = await useDb().transaction(async (trx) => {
    const [row] = await trx('rig_tokens').insert({
      build_id: build.id,
      name: body.name,
      prefix: token.slice(0, 10),
      token_hash: hashToken(token),
      created_by: user!.id,
      expires_at: body.expiresAt ?? null,
    }).returning(['id', 'name', 'prefix', 'expires_at as expiresAt', 'created_at as createdAt'])
    await audit(event, { action: 'rig-token.created', teamId: build.team_id, actorId: user!.id, actorLabel: user!.email, detail: { build: build.slug, name: body.name, prefix: token.slice(0, 10) } }, trx)
    return row
  })
  setResponseStatus(event, 201)
  // the only time the token itself is shown
  return { ...row, token }
})
