import { contentDisposition } from '#shared/utils/fileNames'

// Every sample of the build's readings: as entered, and in SI.
export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  setResponseHeaders(event, {
    'Content-Type': 'text/csv; charset=utf-8',
    'Content-Disposition': contentDisposition('attachment', `${build.slug}-readings.csv`),
    'Cache-Control': 'private, no-store',
    'X-Content-Type-Options': 'nosniff',
  })
  return sendStream(event, readingsCsv(useDb(), build))
})
