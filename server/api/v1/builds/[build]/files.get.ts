import type { FileList } from '#shared/types/files'
import { FileListQuery } from '#shared/utils/fileSchemas'

export default defineEventHandler(async (event): Promise<FileList> => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const query = queryAs(event, FileListQuery)
  return await listFiles(useDb(), access.actor, { buildId: access.build.id, query })
})
