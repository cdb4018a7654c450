import type { H3Event } from 'h3'

// Security headers on every answer, and a strict Content-Security-Policy on every page.
// Server rendering writes a few inline scripts (the runtime config, the theme set before the
// first paint); each rendered page gets a fresh nonce, written into each of its <script> tags and
// into the policy, so those run and no injected script can (a kept page, served again, names its
// scripts by digest instead: server/utils/serving/csp.ts). Scripts, styles, fonts and everything
// fetched come from the app itself. Answers that bring their own policy (stored files) keep it.

function isHttps(event: H3Event): boolean {
  if ((event.node.req.socket as { encrypted?: boolean }).encrypted) return true
  return Boolean(useRuntimeConfig().auth?.trustProxy) && getRequestHeader(event, 'x-forwarded-proto')?.split(',')[0]?.trim() === 'https'
}

export default defineNitroPlugin((nitroApp) => {
  nitroApp.hooks.hook('request', (event) => {
    const res = event.node.res
    res.setHeader('X-Content-Type-Options', 'nosniff')
    res.setHeader('X-Frame-Options', 'DENY')
    res.setHeader('Referrer-Policy', 'strict-origin-when-cross-origin')
    if (isHttps(event)) res.setHeader('Strict-Transport-Security', 'max-age=31536000; includeSubDomains')
  })

  nitroApp.hooks.hook('render:html', (html, { event }) => {
    const nonce = pageNonce(event)
    // not 'body': the app's own markup, where Vue escapes every tag it didn't write (and the scan of
    // a large page cost more than the rest of this hook)
    for (const part of ['head', 'bodyPrepend', 'bodyAppend'] as const) {
      html[part] = html[part].map(chunk => addNonce(chunk, nonce))
    }
  })

  nitroApp.hooks.hook('render:response', (response, { event }) => {
    const headers = (response.headers ??= {})
    delete headers['x-powered-by']
    const type = String(headers['content-type'] ?? '')
    if (type.startsWith('text/html') && !getResponseHeader(event, 'content-security-policy')) {
      headers['content-security-policy'] = contentSecurityPolicy(`'nonce-${pageNonce(event)}'`)
    }
  })

  nitroApp.hooks.hook('beforeResponse', (event) => {
    event.node.res.removeHeader('x-powered-by')
  })
})
