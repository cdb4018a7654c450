export default defineEventHandler(async (event) => {
  try {
    await useDb().raw('select 1')
    return { status: 'ok', db: 'ok' }
  }
  catch {
    setResponseStatus(event, 503)
    return { status: 'degraded', db: 'down' }
  }
})
