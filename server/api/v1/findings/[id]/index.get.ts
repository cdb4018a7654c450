export default defineEventHandler(async (event) => {
  const { findingId, build, role } = await requireFindingRole(event, 'reviewer', { allowRigToken: true })
  return await findingDetail(useDb(), findingId, build, role)
})
