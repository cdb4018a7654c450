// Predicted against measured on every revision, the calibration factor and the sensitivities.
export default defineEventHandler(async (event) => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { build } = access
  return await keptAnswer(event, access, async () => {
    const db = useDb()
    const target = await findTarget(db, build.id, textParam(event, 'key'))
    return await targetDesign(db, target)
  })
})
