export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const access = await requireFindingRole(event, 'engineer')
  const body = await bodyAs(event, FixBody)
  const fix = await useDb().transaction(async (trx) => {
    const finding = await lockFinding(trx, access.findingId)
    return await addFix(trx, access.actor, { finding, body })
  })
  setResponseStatus(event, 201)
  return fix
})
