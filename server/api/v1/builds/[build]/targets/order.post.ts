export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer', { allowRigToken: true })
  const { keys } = await bodyAs(event, TargetOrderBody)
  await useDb().transaction(trx => reorderTargets(trx, { buildId: build.id, keys }))
  return { keys }
})
