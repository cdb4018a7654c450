export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { archived } = queryAs(event, TargetListQuery)
  const q = useDb()('targets').where({ build_id: build.id }).orderBy([{ column: 'position' }, { column: 'key' }])
  if (archived !== '1') q.whereNull('archived_at')
  return (await q).map(targetView)
})
