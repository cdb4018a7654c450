export default defineEventHandler(async (event) => {
  const access = await requireFindingRole(event, 'engineer', { allowRigToken: true })
  const body = await bodyAs(event, MoveBody)
  const actor = findingActor(access)
  return await useDb().transaction(async (trx) => {
    await lockBoard(trx, access.build.id)
    const finding = await lockFinding(trx, access.findingId)
    const moved = await moveFinding(trx, finding, body, actor)
    if (moved.override) {
      await audit(event, { action: 'finding.override', teamId: access.build.team_id, actorId: actor.userId, actorLabel: access.actorLabel, detail: { finding: finding.id, from: finding.lane, to: body.lane, reason: body.override!.reason } }, trx)
    }
    return moved
  })
})
