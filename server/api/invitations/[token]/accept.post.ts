export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const token = getRouterParam(event, 'token') ?? ''
  const team = await useDb().transaction(trx => acceptInvitation(event, trx, token, user))
  return { team }
})
