import { createHash, randomBytes } from 'node:crypto'
import type { H3Event } from 'h3'

// The strict Content-Security-Policy of every page. Server rendering writes a few inline scripts
// (the runtime config, the theme set before the first paint). A rendered page gets a fresh nonce,
// written into each of its <script> tags and into the policy, so those run and no injected script
// can (server/plugins/securityHeaders.ts). A kept page, served again as the same bytes, names its
// inline scripts by their SHA-256 digests instead (CSP Level 2 hash sources): only scripts with
// exactly that text run, and no nonce is ever sent twice.

const NONCE = Symbol('csp nonce')

/** The policy; `scripts` the inline scripts' sources: `'nonce-…'`, or `'sha256-…'` digests. */
export function contentSecurityPolicy(scripts: string): string {
  return [
    `default-src 'self'`,
    `script-src 'self' ${scripts}`,
    // Vue binds style attributes and the build inlines component styles
    `style-src 'self' 'unsafe-inline'`,
    `img-src 'self' data: blob:`,
    `media-src 'self' blob:`,
    `font-src 'self'`,
    `connect-src 'self'`,
    `object-src 'none'`,
    `base-uri 'self'`,
    `form-action 'self'`,
    `frame-ancestors 'none'`,
  ].join('; ')
}

/** This request's nonce (made on first use). */
export function pageNonce(event: H3Event): string {
  const context = event.context as Record<symbol, string | undefined>
  return (context[NONCE] ??= randomBytes(16).toString('base64'))
}

/** `<script …>` → `<script nonce="…" …>`, for every script tag in a chunk of rendered HTML. */
export function addNonce(html: string, nonce: string): string {
  return html.replace(/<script\b(?![^>]*\bnonce=)/gi, `<script nonce="${nonce}"`)
}

const SCRIPT = /<script\b([^>]*)>([\s\S]*?)<\/script>/gi
const DATA_TYPE = /\btype="(?!module"|text\/javascript"|application\/javascript")[^"]*"/i

/** `'sha256-…'` of every inline script of a page that runs (not a data block, not one with src). */
export function inlineScriptHashes(html: string): string {
  const hashes = new Set<string>()
  for (const [, attrs, text] of html.matchAll(SCRIPT)) {
    if (/\bsrc=/i.test(attrs!) || DATA_TYPE.test(attrs!)) continue
    hashes.add(`'sha256-${createHash('sha256').update(text!).digest('base64')}'`)
  }
  return [...hashes].join(' ')
}
