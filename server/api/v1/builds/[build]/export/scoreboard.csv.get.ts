import { contentDisposition } from '#shared/utils/fileNames'

// One row per target and revision, in each target's display unit.
export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const csv = await scoreboardCsv(useDb(), build)
  setResponseHeaders(event, {
    'Content-Type': 'text/csv; charset=utf-8',
    'Content-Disposition': contentDisposition('attachment', `${build.slug}-scoreboard.csv`),
    'Cache-Control': 'private, no-store',
    'X-Content-Type-Options': 'nosniff',
  })
  return csv
})
