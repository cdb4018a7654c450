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
