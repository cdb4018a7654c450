export default defineEventHandler(async (event) => {
  const { build, role } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const db = useDb()
  const revision = await findRevision(db, build.id, textParam(event, 'label'))
  return await buildRevisionDetail(db, build, role, revision)
})
