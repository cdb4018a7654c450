export default defineEventHandler(async (event) => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { build, role } = access
  return await keptAnswer(event, access, async () => {
    const db = useDb()
    const revision = await findRevision(db, build.id, textParam(event, 'label'))
    return await buildRevisionDetail(db, build, role, revision)
  })
})
