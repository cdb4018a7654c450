import type { H3Event } from 'h3'

// While PostgreSQL can't be reached, a request that needed it is a 503 with Retry-After (a
// client or a proxy should try again shortly), not a 500. The pool reconnects on the next
// request once the database is back, so recovery needs nothing from here.

export const RETRY_AFTER_SECONDS = 5

// connection refused, reset or timed out; PostgreSQL shutting down or starting up; the class 08
// connection exceptions (PostgreSQL, Appendix A: error codes)
const NETWORK_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EHOSTUNREACH', 'ENOTFOUND', 'EPIPE', 'EAI_AGAIN'])
const PG_CODES = new Set(['57P01', '57P02', '57P03', '08000', '08001', '08003', '08004', '08006'])
const MESSAGES = /Connection terminated|connection timeout|timeout exceeded when trying to connect|Knex: Timeout acquiring a connection|Client has encountered a connection error|the database system is (starting up|shutting down)/i

/** True when the error (or what caused it) says the database could not be reached. */
export function isDbUnavailable(error: unknown): boolean {
  const seen = new Set<unknown>()
  let e = error as { code?: unknown, name?: unknown, message?: unknown, cause?: unknown, errors?: unknown[] } | undefined
  while (e && typeof e === 'object' && !seen.has(e)) {
    seen.add(e)
    if (typeof e.code === 'string' && (NETWORK_CODES.has(e.code) || PG_CODES.has(e.code))) return true
    if (e.name === 'KnexTimeoutError') return true
    if (typeof e.message === 'string' && MESSAGES.test(e.message)) return true
    // an AggregateError (IPv4 and IPv6 both refused)
    if (Array.isArray(e.errors) && e.errors.some(x => isDbUnavailable(x))) return true
    e = e.cause as typeof e
  }
  return false
}

export default defineNitroPlugin((nitroApp) => {
  // called before the error is turned into an answer, so the answer is the 503
  nitroApp.hooks.hook('error', (error, context) => {
    const event = context.event as H3Event | undefined
    if (!event || event.node.res.headersSent || !isDbUnavailable(error)) return
    const e = error as { statusCode?: number, statusMessage?: string, message: string, unhandled?: boolean, fatal?: boolean }
    e.statusCode = 503
    e.statusMessage = 'Service Unavailable'
    e.message = 'The database is unavailable; try again in a few seconds'
    e.unhandled = false
    e.fatal = false
    setResponseHeader(event, 'Retry-After', RETRY_AFTER_SECONDS)
  })
})
