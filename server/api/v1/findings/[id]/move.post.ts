export default defineEventHandler(async (event) => {
  const access = await requireFindingRole(event, 'engineer', { allowRigToken: true })
  const body = await bodyAs(event, MoveBody)
  const actor = findingActor(access)
  // an Owner's override is kept in the team's audit log, written with the move
  const auditLog = auditRow(event, { action: 'finding.override', teamId: access.build.team_id, actorId: actor.userId, actorLabel: access.actorLabel })
  // most moves need no lock (see moveFinding); the rest take the board's
  const quick = await moveFinding(useDb(), false, access.finding, body, actor, auditLog)
  if (quick) return quick
  for (let attempt = 1; ; attempt++) {
    try {
      return await useDb().transaction(async (trx) => {
        // the board's lock orders moves in a build; the finding's version guards the row itself
        await lockBoard(trx, access.build.id)
        return (await moveFinding(trx, true, access.finding, body, actor, auditLog))!
      })
    }
    catch (error) {
      // a move made without the lock took the same rank meanwhile, and the commit refused this
      // one (the lane's ranks are unique): place it again from the board as it is now
      if ((error as { code?: string }).code !== '23505') throw error
      if (attempt === 5) {
        throw createError({ statusCode: 409, message: 'Several cards were just moved to the same place. Reload the board and try again.' })
      }
    }
  }
})
