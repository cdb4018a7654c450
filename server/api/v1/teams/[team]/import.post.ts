// multipart/form-data: optionally `name`, then `file`, a build archive (docs/archive.md)
export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const { team, actor } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'engineer')
  const created = await importBuildArchive(useDb(), actor, { team, body: event.node.req, headers: event.node.req.headers })
  setResponseStatus(event, 201)
  return created
})
