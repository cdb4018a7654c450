import { createHmac } from 'node:crypto'

/** The query of a genuine unsubscribe link, signed like the server signs it (the test server's secret is in the environment). */
export function unsubscribeQuery(userId: string, buildId: string): string {
  const secret = process.env.NUXT_SESSION_PASSWORD
  if (!secret) throw new Error('NUXT_SESSION_PASSWORD is not set (scripts/test.sh exports it)')
  const s = createHmac('sha256', secret).update(`unsubscribe:${userId}:${buildId}`).digest('base64url')
  return new URLSearchParams({ u: userId, b: buildId, s }).toString()
}
