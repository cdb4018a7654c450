export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const body = await bodyAs(event, BuildBody)
  const build = await createBuild(event, body)
  setResponseStatus(event, 201)
  return build
})
