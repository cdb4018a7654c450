import { describe, expect, it } from 'vitest'
import { BASE_URL } from '../support/env'

describe('security headers', () => {
  it('a page sends a strict CSP with a fresh nonce, and the other headers; no X-Powered-By', async () => {
    const one = await fetch(`${BASE_URL}/login`)
    const two = await fetch(`${BASE_URL}/login`)
    const csp = one.headers.get('content-security-policy')!
    expect(csp).toMatch(/default-src 'self'/)
    expect(csp).toMatch(/script-src 'self' 'nonce-[A-Za-z0-9+/=]{20,}'(;|$)/)
    expect(csp).not.toMatch(/unsafe-eval|script-src[^;]*unsafe-inline/)
    expect(csp).toMatch(/font-src 'self'/)
    expect(csp).toMatch(/frame-ancestors 'none'/)
    expect(csp).not.toBe(two.headers.get('content-security-policy'))
    const nonce = csp.match(/'nonce-([^']+)'/)![1]!
    const html = await one.text()
    const scripts = html.match(/<script\b[^>]*>/g)!
    expect(scripts.length).toBeGreaterThan(0)
    for (const tag of scripts) expect(tag).toContain(`nonce="${nonce}"`)
    for (const res of [one, await fetch(`${BASE_URL}/api/units`)]) {
      expect(res.headers.get('x-content-type-options')).toBe('nosniff')
      expect(res.headers.get('x-frame-options')).toBe('DENY')
      expect(res.headers.get('referrer-policy')).toBe('strict-origin-when-cross-origin')
      expect(res.headers.get('x-powered-by')).toBeNull()
      // served over plain http here: no HSTS
      expect(res.headers.get('strict-transport-security')).toBeNull()
    }
  })
})
