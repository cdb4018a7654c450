export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const access = await requireFindingRole(event, 'engineer')
  const fixId = uuidParam(event, 'fixId')
  const patch = await bodyAs(event, FixPatch)
  return await useDb().transaction(async (trx) => {
    const finding = await lockFinding(trx, access.findingId)
    return await editFix(trx, access.actor, { finding, fixId, patch })
  })
})
