// Predicted against measured on every revision, the calibration factor and the sensitivities.
export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const db = useDb()
  const target = await findTarget(db, build.id, textParam(event, 'key'))
  return await targetDesign(db, target)
})
