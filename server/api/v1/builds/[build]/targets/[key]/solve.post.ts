// The value of one design parameter at which the calibrated prediction meets the threshold.
// It computes and stores nothing, so every member may ask.
export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const key = textParam(event, 'key')
  const body = await bodyAs(event, SolveBody)
  const db = useDb()
  const target = await findTarget(db, build.id, key)
  return await solveTarget(db, { target, body })
})
