// Where the services started by scripts/test.sh live.
export const BASE_URL = process.env.RATCHET_TEST_BASE_URL ?? 'http://127.0.0.1:3100'
export const MAILDEV_URL = process.env.RATCHET_TEST_MAILDEV_URL ?? 'http://127.0.0.1:1180'
export const DATABASE_URL = process.env.DATABASE_URL ?? ''
export const SCRATCH_DATABASE_URL = process.env.RATCHET_SCRATCH_DATABASE_URL ?? ''
export const ROOT = new URL('../..', import.meta.url).pathname
