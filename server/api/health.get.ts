import { Socket } from 'node:net'

/** Whether something listens at host:port (the SMTP relay), within `ms`. */
function reachable(host: string, port: number, ms = 1000): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = new Socket()
    const done = (ok: boolean) => {
      socket.destroy()
      resolve(ok)
    }
    socket.setTimeout(ms, () => done(false))
    socket.once('error', () => done(false))
    socket.connect(port, host, () => done(true))
  })
}

// Each part the app depends on, by name. The database is needed for every answer: without it
// this is a 503 with Retry-After. Without the mail relay the app still works (e-mail waits in
// the queue), so that is reported, with 200.
export default defineEventHandler(async (event) => {
  const smtp = useRuntimeConfig().smtp
  const [db, mail] = await Promise.all([
    useDb().raw('select 1').then(() => 'ok' as const, () => 'down' as const),
    reachable(smtp.host, Number(smtp.port)).then(ok => (ok ? 'ok' as const : 'down' as const)),
  ])
  const down = [db === 'down' ? 'db' : null, mail === 'down' ? 'mail' : null].filter(Boolean)
  if (db === 'down') {
    setResponseStatus(event, 503)
    setResponseHeader(event, 'Retry-After', 5)
  }
  return { status: down.length ? 'degraded' : 'ok', db, mail, ...(down.length ? { down } : {}) }
})
