export default defineEventHandler(async (event) => {
  const access = await requireFindingRole(event, 'engineer', { allowRigToken: true })
  const body = await bodyAs(event, MoveBody)
  const actor = findingActor(access)
  return await useDb().transaction(async (trx) => {
    // the board's lock orders moves in a build; the finding's version guards the row itself
    await lockBoard(trx, access.build.id)
    const moved = await moveFinding(trx, access.finding, body, actor)
    if (moved.override) {
      await audit(event, { action: 'finding.override', teamId: access.build.team_id, actorId: actor.userId, actorLabel: access.actorLabel, detail: { finding: access.findingId, from: access.finding.lane, to: body.lane, reason: body.override!.reason } }, trx)
    }
    return moved
  })
})
