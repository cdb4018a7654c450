import type { Db } from '../db'

/**
 * Sign-in throttle, counted in PostgreSQL so it holds across app servers: too many failures for
 * one address from one IP, or from one IP across addresses, within the window answer 429 —
 * even for the right password — until the oldest counted failure leaves the window. Answers the
 * seconds to wait, or null when a sign-in may be tried (assertNotThrottled makes it the 429).
 */
export async function signInWait(db: Db, email: string, ip: string): Promise<number | null> {
  const { failuresPerAddress, failuresPerIp, windowMinutes } = useRuntimeConfig().auth
  const windowStart = db.raw(`now() - make_interval(mins => ?)`, [Number(windowMinutes)])

  const [pair, perIp] = await Promise.all([
    db('login_failures').where({ email, ip }).where('at', '>', windowStart)
      .select(db.raw('count(*)::int as n'), db.raw('min(at) as oldest')).then(r => r[0]!),
    db('login_failures').where({ ip }).where('at', '>', windowStart)
      .select(db.raw('count(*)::int as n'), db.raw('min(at) as oldest')).then(r => r[0]!),
  ])

  const limits: [{ n: number, oldest: Date | null }, number][] = [[pair, Number(failuresPerAddress)], [perIp, Number(failuresPerIp)]]
  for (const [stat, limit] of limits) {
    if (stat.n >= limit && stat.oldest) {
      return Math.max(1, Math.ceil((new Date(stat.oldest).getTime() + Number(windowMinutes) * 60_000 - Date.now()) / 1000))
    }
  }
  return null
}

/**
 * Password-reset throttle, counted the same way over `reset_requests` (every request counts,
 * known address or not): too many for one address, or from one IP, within the window answer
 * the seconds to wait; null when another may be made.
 */
export async function resetWait(db: Db, email: string, ip: string): Promise<number | null> {
  const { resetsPerAddress, resetsPerIp, windowMinutes } = useRuntimeConfig().auth
  const windowStart = db.raw(`now() - make_interval(mins => ?)`, [Number(windowMinutes)])
  const [perAddress, perIp] = await Promise.all([
    db('reset_requests').where({ email }).where('at', '>', windowStart)
      .select(db.raw('count(*)::int as n'), db.raw('min(at) as oldest')).then(r => r[0]!),
    db('reset_requests').where({ ip }).where('at', '>', windowStart)
      .select(db.raw('count(*)::int as n'), db.raw('min(at) as oldest')).then(r => r[0]!),
  ])
  const limits: [{ n: number, oldest: Date | null }, number][] = [[perAddress, Number(resetsPerAddress)], [perIp, Number(resetsPerIp)]]
  for (const [stat, limit] of limits) {
    if (stat.n >= limit && stat.oldest) {
      return Math.max(1, Math.ceil((new Date(stat.oldest).getTime() + Number(windowMinutes) * 60_000 - Date.now()) / 1000))
    }
  }
  return null
}
