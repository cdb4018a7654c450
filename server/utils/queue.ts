import PgBoss from 'pg-boss'
import pg from 'pg'

// The durable job queue (pg-boss, in PostgreSQL's `pgboss` schema). Jobs survive restarts, are
// retried with backoff, and any number of app servers can work the same queues.

export const QUEUES = {
  /** turns new events into one delivery job per immediate subscriber */
  fanout: 'ratchet-fanout',
  /** one immediate e-mail: { userId, eventId } */
  deliver: 'ratchet-deliver',
  /** one digest e-mail: { userId, buildId, period } */
  digest: 'ratchet-digest',
  /** the e-mails to people mentioned in comments (server/utils/findings/mentions.ts) */
  mentions: 'ratchet-mentions',
  /** "forgot password" e-mails (server/utils/access/resets.ts) */
  resets: 'ratchet-resets',
  /** cron: queue the daily / weekly digests */
  daily: 'ratchet-digest-daily',
  weekly: 'ratchet-digest-weekly',
} as const

let starting: Promise<PgBoss> | undefined
let pool: pg.Pool | undefined

function connectionString(): string {
  const url = useRuntimeConfig().databaseUrl || process.env.DATABASE_URL
  if (!url) throw new Error('DATABASE_URL is not set')
  return url
}

/** A small pool of plain connections for work that shares a transaction with pg-boss. */
export function queuePool(): pg.Pool {
  pool ??= new pg.Pool({ connectionString: connectionString(), max: 3 })
  return pool
}

export function useQueue(): Promise<PgBoss> {
  starting ??= (async () => {
    const boss = new PgBoss({ connectionString: connectionString(), max: 4, schema: 'pgboss' })
    boss.on('error', err => console.error('[queue]', err.message))
    await boss.start()
    const retry = { retryLimit: 12, retryDelay: 1, retryBackoff: true, expireInMinutes: 5 }
    for (const name of Object.values(QUEUES)) {
      await boss.createQueue(name, { name, ...retry })
    }
    return boss
  })()
  starting.catch(() => { starting = undefined })
  return starting
}

export async function stopQueue() {
  if (!starting) return
  const boss = await starting.catch(() => undefined)
  starting = undefined
  await boss?.stop({ graceful: true, timeout: 5000, wait: true }).catch(() => {})
  await pool?.end().catch(() => {})
  pool = undefined
}

/** Asks a worker to fan out new events now, rather than at the next minute's sweep. */
export function nudgeFanout() {
  useQueue()
    .then(boss => boss.send(QUEUES.fanout, {}, { singletonKey: 'fanout', singletonSeconds: 1, singletonNextSlot: true }))
    .catch(err => console.error('[queue] fanout nudge failed', err.message))
}

/** Asks a worker to send pending mention e-mails now. */
export function nudgeMentions() {
  if (process.env.RATCHET_QUEUE === 'off') return
  useQueue()
    .then(boss => boss.send(QUEUES.mentions, {}, { singletonKey: 'mentions', singletonSeconds: 1, singletonNextSlot: true }))
    .catch(err => console.error('[queue] mentions nudge failed', err.message))
}

/** Asks a worker to settle pending password-reset requests now. */
export function nudgeResets() {
  if (process.env.RATCHET_QUEUE === 'off') return
  useQueue()
    .then(boss => boss.send(QUEUES.resets, {}, { singletonKey: 'resets', singletonSeconds: 1, singletonNextSlot: true }))
    .catch(err => console.error('[queue] resets nudge failed', err.message))
}
