export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const user = await requireUser(event)
  const body = await bodyAs(event, TeamBody)
  const team = await useDb().transaction(async (trx) => {
    const team = await createTeam(trx, { name: body.name, slug: body.slug, ownerId: user.id })
    await audit(event, { action: 'team.created', teamId: team.id, actorId: user.id, actorLabel: user.email, detail: { name: team.name } }, trx)
    return team
  })
  setResponseStatus(event, 201)
  return { ...team, role: 'owner' }
})
