export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const { build, user } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer')
  const { frequency } = await bodyAs(event, SubscriptionBody)
  await setSubscription(useDb(), user!.id, build.id, frequency)
  return { build: build.slug, frequency }
})
