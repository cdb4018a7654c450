import { AsyncLocalStorage } from 'node:async_hooks'
import { performance } from 'node:perf_hooks'

// Server-Timing on every response: `app;dur=<ms>` from the request's arrival to the response,
// a JSON body's serialisation included, and `db;dur=<ms>;desc="queries=N"`, the SQL queries the
// request ran and their summed time. Cheap (a counter per request); the benchmark reads it.

interface RequestTiming {
  start: number
  queries: number
  dbMs: number
}

const current = new AsyncLocalStorage<RequestTiming>()
let listening = false

function listenToDb() {
  if (listening) return
  let db
  try {
    db = useDb()
  }
  catch {
    return // no database configured yet; try again on the next request
  }
  listening = true
  const started = new Map<string, [RequestTiming, number]>()
  db.on('query', (q: { __knexQueryUid?: string }) => {
    const timing = current.getStore()
    if (!timing) return
    timing.queries++
    if (q.__knexQueryUid) started.set(q.__knexQueryUid, [timing, performance.now()])
  })
  const done = (q: { __knexQueryUid?: string }) => {
    const entry = q.__knexQueryUid ? started.get(q.__knexQueryUid) : undefined
    if (!entry) return
    started.delete(q.__knexQueryUid!)
    entry[0].dbMs += performance.now() - entry[1]
  }
  db.on('query-response', (_r: unknown, q: { __knexQueryUid?: string }) => done(q))
  db.on('query-error', (_e: unknown, q: { __knexQueryUid?: string }) => done(q))
}

export default defineNitroPlugin((nitroApp) => {
  const handler = nitroApp.h3App.handler
  nitroApp.h3App.handler = event => current.run({ start: performance.now(), queries: 0, dbMs: 0 }, () => handler(event))
  nitroApp.hooks.hook('request', listenToDb)
  nitroApp.hooks.hook('beforeResponse', (event, response) => {
    const timing = current.getStore()
    if (!timing || event.node.res.headersSent) return
    // h3 turns a plain object or array into JSON after this hook; doing it here, the same way,
    // puts that time (tens of milliseconds for a large board) inside the figure
    const body = response?.body
    if (body !== null && typeof body === 'object' && (Array.isArray(body) || Object.getPrototypeOf(body) === Object.prototype)
      && !getResponseHeader(event, 'content-type')) {
      setResponseHeader(event, 'content-type', 'application/json')
      response!.body = JSON.stringify(body)
    }
    const app = (performance.now() - timing.start).toFixed(2)
    setResponseHeader(event, 'Server-Timing', `app;dur=${app}, db;dur=${timing.dbMs.toFixed(2)};desc="queries=${timing.queries}"`)
  })
})
