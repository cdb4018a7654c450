import type { CsvImported } from '#shared/types/files'
import { CsvImportBody } from '#shared/utils/fileSchemas'

// Readings from an uploaded CSV: all rows or none.
export default defineEventHandler(async (event): Promise<CsvImported> => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer', { allowRigToken: true })
  const body = await bodyAs(event, CsvImportBody)
  const imported = await importCsv(useDb(), access.actor, { build: access.build, body }).catch(e => csvBusy(event, e))
  setResponseStatus(event, 201)
  return imported
})
