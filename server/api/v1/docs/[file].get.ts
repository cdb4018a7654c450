// The reference page's files: the UI's script and style (the swagger-ui-dist package, bundled as
// server assets in nuxt.config.ts), our own script that starts it and our own style adjustments.
const FILES: Record<string, { storage: string, key: string, type: string }> = {
  'swagger-ui.css': { storage: 'assets:swagger-ui', key: 'swagger-ui.css', type: 'text/css; charset=utf-8' },
  'swagger-ui-bundle.js': { storage: 'assets:swagger-ui', key: 'swagger-ui-bundle.js', type: 'text/javascript; charset=utf-8' },
  'init.js': { storage: 'assets:server', key: 'api-docs:init.js', type: 'text/javascript; charset=utf-8' },
  'overrides.css': { storage: 'assets:server', key: 'api-docs:overrides.css', type: 'text/css; charset=utf-8' },
}

export default defineEventHandler(async (event) => {
  const file = FILES[getRouterParam(event, 'file') ?? '']
  if (!file) throw createError({ statusCode: 404, message: 'Not found' })
  const storage = useStorage(file.storage)
  const meta = await storage.getMeta(file.key) as { etag?: string }
  if (meta.etag) {
    setResponseHeader(event, 'ETag', meta.etag)
    if (getRequestHeader(event, 'if-none-match') === meta.etag) {
      setResponseStatus(event, 304)
      return null
    }
  }
  const body = await storage.getItemRaw(file.key)
  if (body === null) throw createError({ statusCode: 404, message: 'Not found' })
  setResponseHeaders(event, { 'Content-Type': file.type, 'Cache-Control': 'public, max-age=3600' })
  return body
})
