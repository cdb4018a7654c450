import { z } from 'zod'

// zod for the schemas in shared/utils. The pages send a Content-Security-Policy without
// 'unsafe-eval'; zod compiles object parsers with `new Function` when it can, and merely probing
// for that raises a CSP violation in the browser, so in a browser it parses without compiling. Set
// here, where the schemas import zod, rather than in a plugin: the client's entry then carries no
// zod, and pages without a form load none.
if ((globalThis as { window?: unknown }).window !== undefined) z.config({ jitless: true })

export { z }
