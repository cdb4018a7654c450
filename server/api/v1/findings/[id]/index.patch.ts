export default defineEventHandler(async (event) => {
  const access = await requireFindingRole(event, 'engineer', { allowRigToken: true })
  const patch = await bodyAs(event, FindingPatch)
  return await useDb().transaction(async (trx) => {
    const finding = await lockFinding(trx, access.findingId)
    return await editFinding(trx, access.actor, { finding, patch })
  })
})
