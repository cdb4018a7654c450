import { createHmac, timingSafeEqual } from 'node:crypto'

// One-click unsubscribe links (RFC 8058): a person and a build, signed with the server's secret,
// so a link works without signing in and can't be made for someone else.

function secret(): string {
  const s = useRuntimeConfig().session?.password || process.env.NUXT_SESSION_PASSWORD
  if (!s) throw new Error('NUXT_SESSION_PASSWORD is not set')
  return s
}

export function unsubscribeSignature(userId: string, buildId: string): string {
  return createHmac('sha256', secret()).update(`unsubscribe:${userId}:${buildId}`).digest('base64url')
}

export function verifyUnsubscribe(userId: string, buildId: string, signature: string): boolean {
  const want = Buffer.from(unsubscribeSignature(userId, buildId))
  const got = Buffer.from(signature)
  return want.length === got.length && timingSafeEqual(want, got)
}

export function unsubscribeQuery(userId: string, buildId: string): string {
  return new URLSearchParams({ u: userId, b: buildId, s: unsubscribeSignature(userId, buildId) }).toString()
}
