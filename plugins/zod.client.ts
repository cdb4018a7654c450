import { z } from 'zod'

// The pages send a Content-Security-Policy without 'unsafe-eval'. zod compiles object parsers
// with `new Function` when it can, and probing for that alone raises a CSP violation in the
// browser: parse without it.
export default defineNuxtPlugin(() => {
  z.config({ jitless: true })
})
