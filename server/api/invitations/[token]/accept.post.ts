export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const token = getRouterParam(event, 'token') ?? ''
  const team = await useDb().transaction(trx => acceptInvitation(trx, userActor(event, user, null), { token, email: user.email }))
  return { team }
})
