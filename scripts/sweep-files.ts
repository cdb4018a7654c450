// Removes stored evidence bytes that have no row (left by a crash mid-upload, or by a deleted
// build), once they are older than the grace period. Reads the same NUXT_FILES_* settings and
// DATABASE_URL as the server. Safe to run while the server runs; run it from cron, e.g. daily.
//   npx tsx scripts/sweep-files.ts [--grace-hours 24] [--dry-run]
import knex from 'knex'
import { knexConfig } from '../knexfile'
import { createFileStore, filesConfigFromEnv } from '../server/utils/files/storage'
import { sweepOrphans } from '../server/utils/files/sweep'

const args = process.argv.slice(2)
const graceAt = args.indexOf('--grace-hours')
const graceHours = graceAt >= 0 ? Number(args[graceAt + 1]) : 24
if (!Number.isFinite(graceHours) || graceHours < 0) {
  console.error('--grace-hours takes a number of hours (0 or more)')
  process.exit(2)
}
const dryRun = args.includes('--dry-run')

const config = filesConfigFromEnv()
const db = knex(knexConfig())
try {
  const result = await sweepOrphans(db, createFileStore(config), { graceMs: graceHours * 3600_000, dryRun })
  console.log(`sweep (${config.driver}${config.driver === 'fs' ? ` ${config.dir}` : ''}): ${result.scanned} stored, `
    + `${result.removed.length} without a row ${dryRun ? 'would be removed' : 'removed'}, ${result.young} younger than ${graceHours} h left alone`)
}
finally {
  await db.destroy()
}
