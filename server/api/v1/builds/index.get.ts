export default defineEventHandler(async (event) => {
  const bearer = bearerToken(event)
  // a rig token sees its own build; a person the builds of their teams
  const viewer = bearer ? { buildId: (await useRigToken(event, bearer)).build_id } : { userId: (await requireUser(event)).id }
  return await listVisibleBuilds(useDb(), viewer)
})
