import type { FileCreated } from '#shared/types/files'

// multipart/form-data: `file`, and optionally `revision` (label), `reading` (id), `finding` (id)
export default defineEventHandler(async (event): Promise<FileCreated> => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer', { allowRigToken: true })
  const created = await receiveUpload(useDb(), access.actor, { build: access.build, body: event.node.req, headers: event.node.req.headers })
  setResponseStatus(event, 201)
  return created
})
