// npm run restore -- DIR [--force]: a backup made by scripts/backup.ts into an empty database
// (DATABASE_URL) and an empty file store (NUXT_FILES_DIR). Every checksum is verified before
// anything is written; a database or store that holds anything is refused unless --force, which
// empties them first. pg_restore runs in one transaction: a failure leaves the database empty.
import { mkdir, readFile, readdir, rm } from 'node:fs/promises'
import { join, resolve } from 'node:path'
import knex from 'knex'
import { knexConfig } from '../knexfile'
import { FORMAT, STORAGE_KEY, VERSION, copyHashed, failWith, pgConnection, run, sha256Of, type BackupManifest } from './backupFormat'

const fail: (message: string, code?: number) => never = failWith('restore')

const args = process.argv.slice(2)
const force = args.includes('--force')
const given = args.find(a => !a.startsWith('-'))
if (!given) fail('usage: npm run restore -- DIR [--force]', 2)
const dir = resolve(process.env.RATCHET_CALLER_DIR ?? process.cwd(), given)

// ---- the backup, checked whole before anything is touched ----
let manifest: BackupManifest
try {
  manifest = JSON.parse(await readFile(join(dir, 'manifest.json'), 'utf8')) as BackupManifest
}
catch {
  fail(`${dir} holds no readable manifest.json: not a finished backup`, 2)
}
if (manifest.format !== FORMAT) fail(`${dir} is not a Ratchet backup (format ${JSON.stringify(manifest.format)})`, 2)
if (!(manifest.version >= 1 && manifest.version <= VERSION)) fail(`the backup is of format version ${manifest.version}; this Ratchet reads up to ${VERSION}`, 2)
const dumpPath = join(dir, 'database.dump')
const dump = await sha256Of(dumpPath).catch(() => fail('database.dump is missing', 2))
if (dump.sha256 !== manifest.database.sha256) fail('database.dump does not match its checksum in the manifest', 2)
for (const f of manifest.files.list) {
  if (!STORAGE_KEY.test(f.key)) fail(`the manifest names a file outside the store's keys: ${JSON.stringify(f.key)}`, 2)
  const got = await sha256Of(join(dir, 'files', f.key)).catch(() => null)
  if (!got) fail(`files/${f.key} is missing from the backup`, 2)
  if (got.sha256 !== f.sha256 || got.size !== f.size) fail(`files/${f.key} does not match its checksum in the manifest`, 2)
}

// ---- the destination must be empty (or emptied with --force) ----
const filesDir = resolve(process.env.NUXT_FILES_DIR || '.data/files')
const pgRestore = join(process.env.RATCHET_PG_BINDIR ?? '', 'pg_restore')
const url = process.env.DATABASE_URL ?? fail('DATABASE_URL is not set')
const conn = pgConnection(url)
const db = knex(knexConfig(url))
const started = performance.now()
try {
  const schemas = (await db.raw(`SELECT nspname FROM pg_namespace WHERE nspname NOT LIKE 'pg\\_%' AND nspname <> 'information_schema'`)).rows.map((r: { nspname: string }) => r.nspname) as string[]
  const tables = Number((await db.raw(`SELECT count(*) AS n FROM pg_tables WHERE schemaname NOT LIKE 'pg\\_%' AND schemaname <> 'information_schema'`)).rows[0].n)
  const stored = await readdir(filesDir).catch(() => [] as string[])
  if (!force && tables > 0) fail(`the database already holds ${tables} tables; restore into an empty one, or add --force to replace it`, 2)
  if (!force && stored.length > 0) fail(`the file store ${filesDir} is not empty; restore into an empty one, or add --force to replace it`, 2)
  if (force) {
    for (const s of schemas) await db.raw('DROP SCHEMA ?? CASCADE', [s])
    await db.raw('CREATE SCHEMA public')
    await rm(filesDir, { recursive: true, force: true })
  }
  await mkdir(filesDir, { recursive: true })

  await run(pgRestore, ['--no-owner', '--no-privileges', '--exit-on-error', '--single-transaction', ...conn.args, dumpPath], conn.env)
  let bytes = 0
  for (const f of manifest.files.list) {
    const copied = await copyHashed(join(dir, 'files', f.key), join(filesDir, f.key))
    if (copied.sha256 !== f.sha256) fail(`${f.key} changed while it was copied`)
    bytes += copied.size
  }
  const s = ((performance.now() - started) / 1000).toFixed(1)
  const missing = manifest.files.missing ?? []
  if (missing.length > 0) console.error(`restore: note: ${missing.length} file(s) had no bytes when the backup was taken (files.missing in the manifest); their downloads stay unavailable`)
  console.log(`restore: database from ${manifest.createdAt} (migration ${manifest.migration ?? 'none'}), ${manifest.files.count} files ${(bytes / 1e6).toFixed(2)} MB, in ${s} s`)
}
finally {
  await db.destroy()
}
