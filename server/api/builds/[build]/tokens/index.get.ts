export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer')
  return await useDb()('rig_tokens')
    .leftJoin('users', 'users.id', 'rig_tokens.created_by')
    .where('rig_tokens.build_id', build.id)
    .whereNull('rig_tokens.revoked_at')
    .orderBy('rig_tokens.created_at', 'desc')
    .select('rig_tokens.id', 'rig_tokens.name', 'rig_tokens.prefix', 'rig_tokens.expires_at as expiresAt',
      'rig_tokens.last_used_at as lastUsedAt', 'rig_tokens.last_used_ip as lastUsedIp',
      'rig_tokens.created_at as createdAt', 'users.name as createdBy')
})
