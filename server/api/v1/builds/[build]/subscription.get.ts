export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const { build, user } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer')
  const sub = await subscriptionOf(useDb(), user!.id, build.id)
  return { build: build.slug, frequency: sub?.frequency ?? 'off' }
})
