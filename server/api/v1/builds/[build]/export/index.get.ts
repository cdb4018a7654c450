import { contentDisposition } from '#shared/utils/fileNames'

// The whole build as one archive (tar.gz, docs/archive.md): rows, CSVs and evidence, streamed.
export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const { build, actor } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'engineer')
  const archive = await exportBuildArchive(useDb(), actor, { build })
  setResponseHeaders(event, {
    'Content-Type': 'application/gzip',
    'Content-Disposition': contentDisposition('attachment', archive.filename),
    'Cache-Control': 'private, no-store',
    'X-Content-Type-Options': 'nosniff',
  })
  return sendStream(event, archive.stream)
})
