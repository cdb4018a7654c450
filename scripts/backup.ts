// npm run backup -- DIR: a consistent snapshot of the database and the file store while the app
// keeps serving. One read-only transaction exports its snapshot; pg_dump dumps exactly that
// snapshot, and the files table is read in it too, so the folder holds the bytes of exactly the
// files the dump knows (each checked against its recorded sha256). A file whose bytes are gone
// (deleted while the copy ran, or lost before) is named in the manifest's files.missing and the
// output. The manifest is written last. Layout: scripts/backupFormat.ts.
import { mkdir, readdir, writeFile } from 'node:fs/promises'
import { join, resolve } from 'node:path'
import knex from 'knex'
import { knexConfig } from '../knexfile'
import { FORMAT, STORAGE_KEY, VERSION, copyHashed, failWith, pgConnection, run, sha256Of, type BackupManifest } from './backupFormat'

const fail: (message: string, code?: number) => never = failWith('backup')

const given = process.argv[2]
if (!given || given.startsWith('-')) fail('usage: npm run backup -- DIR (a new or empty folder)', 2)
const dir = resolve(process.env.RATCHET_CALLER_DIR ?? process.cwd(), given)
const held = await readdir(dir).catch(() => null)
if (held && held.length > 0) fail(`${dir} is not empty; give a new or empty folder`, 2)
await mkdir(join(dir, 'files'), { recursive: true })

const filesDir = resolve(process.env.NUXT_FILES_DIR || '.data/files')
const pgDump = join(process.env.RATCHET_PG_BINDIR ?? '', 'pg_dump')
const url = process.env.DATABASE_URL ?? fail('DATABASE_URL is not set')
const conn = pgConnection(url)
const db = knex(knexConfig(url))
const started = performance.now()

try {
  const trx = await db.transaction({ isolationLevel: 'repeatable read', readOnly: true })
  let rows: { storage_key: string, sha256: string, size: string | number }[]
  let migration: string | null
  try {
    const snapshot = (await trx.raw('SELECT pg_export_snapshot() AS id')).rows[0].id as string
    migration = ((await trx('knex_migrations').max({ m: 'name' }).first()) as { m: string | null } | undefined)?.m ?? null
    rows = await trx('files').select('storage_key', 'sha256', 'size').orderBy('storage_key')
    await run(pgDump, ['--format=custom', `--snapshot=${snapshot}`, '--no-owner', '--no-privileges', '-f', join(dir, 'database.dump'), ...conn.args], conn.env)
  }
  finally {
    await trx.rollback().catch(() => {})
  }

  const list: BackupManifest['files']['list'] = []
  const missing: string[] = []
  let bytes = 0
  // an S3 bucket is backed up with the store's own tools (README)
  const inBucket = process.env.NUXT_FILES_DRIVER === 's3'
  if (inBucket) console.log(`backup: the ${rows.length} files are in the S3 bucket: not copied`)
  for (const r of inBucket ? [] : rows) {
    if (!STORAGE_KEY.test(r.storage_key)) fail(`the files table holds a key of an unknown shape: ${JSON.stringify(r.storage_key)}`)
    let copied
    try {
      copied = await copyHashed(join(filesDir, r.storage_key), join(dir, 'files', r.storage_key))
    }
    catch (e) {
      if ((e as NodeJS.ErrnoException).code === 'ENOENT') {
        missing.push(r.storage_key)
        continue
      }
      throw e
    }
    if (copied.sha256 !== r.sha256 || copied.size !== Number(r.size)) {
      fail(`${r.storage_key}: the stored bytes (${copied.size} B, sha256 ${copied.sha256}) are not what the database recorded (${r.size} B, ${r.sha256})`)
    }
    list.push({ key: r.storage_key, size: copied.size, sha256: copied.sha256 })
    bytes += copied.size
  }
  // bytes the database lists but the store lacks (lost before, or the file deleted while the copy
  // ran) can't be copied: the backup goes on, and names them in its manifest and its output
  if (missing.length > 0) {
    console.error(`backup: warning: ${missing.length} file(s) the database lists have no bytes in the store; listed under files.missing in the manifest: ${missing.slice(0, 5).join(', ')}${missing.length > 5 ? ' …' : ''}`)
  }

  const dump = await sha256Of(join(dir, 'database.dump'))
  const manifest: BackupManifest = {
    format: FORMAT,
    version: VERSION,
    createdAt: new Date().toISOString(),
    migration,
    database: { file: 'database.dump', bytes: dump.size, sha256: dump.sha256 },
    files: { count: list.length, bytes, list, missing },
  }
  await writeFile(join(dir, 'manifest.json'), `${JSON.stringify(manifest, null, 1)}\n`, { flag: 'wx' })
  const s = ((performance.now() - started) / 1000).toFixed(1)
  console.log(`backup: ${dir}: database ${(dump.size / 1e6).toFixed(2)} MB (migration ${migration ?? 'none'}), ${list.length} files ${(bytes / 1e6).toFixed(2)} MB, in ${s} s`)
}
finally {
  await db.destroy()
}
