export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  await deleteFile(event, uuidParam(event, 'id'))
  setResponseStatus(event, 204)
  return null
})
