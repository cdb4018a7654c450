export default defineEventHandler(async (event) => {
  const { team, user } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'owner')
  const body = await bodyAs(event, TeamBody.pick({ name: true }))
  await useDb().transaction(async (trx) => {
    await trx('teams').where({ id: team.id }).update({ name: body.name, updated_at: trx.fn.now() })
    await audit(event, { action: 'team.renamed', teamId: team.id, actorId: user.id, actorLabel: user.email, detail: { from: team.name, to: body.name } }, trx)
  })
  return { ...team, name: body.name }
})
