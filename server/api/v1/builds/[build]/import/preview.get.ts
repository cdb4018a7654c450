import type { CsvPreview } from '#shared/types/files'
import { CsvPreviewQuery } from '#shared/utils/fileSchemas'

// The header and first rows of an uploaded CSV, for choosing the columns to import.
export default defineEventHandler(async (event): Promise<CsvPreview> => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer', { allowRigToken: true })
  const { file } = queryAs(event, CsvPreviewQuery)
  return await previewCsv(useDb(), build.id, file).catch(e => csvBusy(event, e))
})
