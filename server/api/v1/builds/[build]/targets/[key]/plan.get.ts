// How many samples tell Met from Short for the target on one revision.
export default defineEventHandler(async (event) => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { build } = access
  return await keptAnswer(event, access, async () => {
    const key = textParam(event, 'key')
    const { revision: label } = queryAs(event, PlanQuery)
    const db = useDb()
    const target = await findTarget(db, build.id, key)
    const revision = await findRevision(db, build.id, label)
    return await planTarget(db, { target, revision })
  })
})
