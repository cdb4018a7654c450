export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const body = await bodyAs(event, BuildBody)
  const { team, actor } = await requireTeamRole(event, body.team, 'engineer')
  const build = await createBuild(useDb(), actor, { team, body })
  setResponseStatus(event, 201)
  return build
})
