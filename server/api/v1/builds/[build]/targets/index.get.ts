export default defineEventHandler(async (event) => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { build } = access
  return await keptAnswer(event, access, async () => {
    const { archived } = queryAs(event, TargetListQuery)
    const q = useDb()('targets').where({ build_id: build.id }).orderBy([{ column: 'position' }, { column: 'key' }])
    if (archived !== '1') q.whereNull('archived_at')
    return (await q).map(targetView)
  })
})
