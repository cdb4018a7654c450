import { createHash } from 'node:crypto'
import { createReadStream, createWriteStream, promises as fsp } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import type { Readable, Writable } from 'node:stream'
import { PassThrough } from 'node:stream'
import { finished, pipeline } from 'node:stream/promises'
import { createGzip } from 'node:zlib'
import type { Knex } from 'knex'
import { pack as tarPack } from 'tar-stream'
import type { BuildRow } from '../../db/tables'
import { recordAudit, type Actor } from '../audit'
import type { Db } from '../db'
import { useFileStore } from '../files/storage'
import { readingsCsv, scoreboardCsv } from '../measure/csv'
import {
  ARCHIVE_FORMAT, ARCHIVE_TABLES, ARCHIVE_VERSION, MANIFEST_NAME, USER_ARRAY_COLUMNS, archiveSchema, tableEntry,
  type ArchiveManifest, type ArchivePerson, type ArchiveTable, type ManifestEntry,
} from './format'

// GET /api/v1/builds/:build/export: one build as a tar.gz (docs/archive.md). The rows are read in
// one read-only snapshot, a batch at a time, each table written to a temporary file (a tar entry
// states its size before its bytes); then the archive streams out: the manifest, the tables, the
// CSVs and every evidence file piped from the file store. Nothing is held whole in memory.

const BATCH = 500

/** Which rows of each table belong to the build, as SQL over the alias x. */
const OF_BUILD: Record<ArchiveTable, { from: string, key: string[] }> = {
  builds: { from: 'builds x WHERE x.id = :build', key: ['id'] },
  targets: { from: 'targets x WHERE x.build_id = :build', key: ['id'] },
  revisions: { from: 'revisions x WHERE x.build_id = :build', key: ['id'] },
  readings: { from: 'readings x JOIN targets t ON t.id = x.target_id WHERE t.build_id = :build', key: ['id'] },
  cell_stats: { from: 'cell_stats x WHERE x.build_id = :build', key: ['target_id', 'revision_id'] },
  findings: { from: 'findings x WHERE x.build_id = :build', key: ['id'] },
  finding_targets: { from: 'finding_targets x JOIN findings f ON f.id = x.finding_id WHERE f.build_id = :build', key: ['finding_id', 'target_id'] },
  fixes: { from: 'fixes x JOIN findings f ON f.id = x.finding_id WHERE f.build_id = :build', key: ['id'] },
  finding_events: { from: 'finding_events x JOIN findings f ON f.id = x.finding_id WHERE f.build_id = :build', key: ['id'] },
  finding_comments: { from: 'finding_comments x JOIN findings f ON f.id = x.finding_id WHERE f.build_id = :build', key: ['id'] },
  files: { from: 'files x WHERE x.build_id = :build', key: ['id'] },
  events: { from: 'events x WHERE x.build_id = :build', key: ['id'] },
}

type Row = Record<string, unknown>

/** Every row of `table` in the build, a batch at a time (keyset order by its key), as JSON. */
async function* rowsOf(db: Db, table: ArchiveTable, buildId: string): AsyncGenerator<Row[]> {
  const { from, key } = OF_BUILD[table]
  const cols = key.map(k => `x.${k}`).join(', ')
  let after: unknown[] | null = null
  for (;;) {
    const bindings: Record<string, unknown> = { build: buildId, limit: BATCH }
    let cond = ''
    if (after) {
      cond = ` AND (${cols}) > (${key.map((_, i) => `:k${i}`).join(', ')})`
      after.forEach((v, i) => { bindings[`k${i}`] = v })
    }
    const { rows } = await db.raw(`SELECT to_jsonb(x) AS r FROM ${from}${cond} ORDER BY ${cols} LIMIT :limit`, bindings) as { rows: { r: Row }[] }
    if (rows.length === 0) return
    yield rows.map(r => r.r)
    const last = rows[rows.length - 1]!.r
    after = key.map(k => last[k])
    if (rows.length < BATCH) return
  }
}

/** Writes to a file while counting and hashing what goes in. */
class StagedFile {
  private hash = createHash('sha256')
  size = 0
  readonly out: Writable
  constructor(readonly path: string) {
    this.out = createWriteStream(path)
  }

  async write(text: string | Buffer) {
    const b = typeof text === 'string' ? Buffer.from(text) : text
    this.hash.update(b)
    this.size += b.length
    if (!this.out.write(b)) await new Promise(resolve => this.out.once('drain', resolve))
  }

  async close(): Promise<{ size: number, sha256: string }> {
    this.out.end()
    await finished(this.out)
    return { size: this.size, sha256: this.hash.digest('hex') }
  }
}

interface Staged extends ManifestEntry { path?: string, storageKey?: string }

/** Reads the build's rows into temporary files; returns the entries in archive order. */
async function stage(trx: Db, build: BuildRow, dir: string): Promise<{ entries: Staged[], counts: Record<string, number> }> {
  const schema = await archiveSchema(trx)
  const people = new Map<string, ArchivePerson | null>()
  const personOf = async (ids: string[]) => {
    const missing = [...new Set(ids)].filter(id => !people.has(id))
    if (missing.length) {
      const found = await trx('users').whereIn('id', missing).select('id', 'name', 'email')
      for (const id of missing) people.set(id, null)
      for (const u of found) people.set(u.id, { name: u.name, email: u.email })
    }
  }
  const entries: Staged[] = []
  const counts: Record<string, number> = {}
  for (const table of ARCHIVE_TABLES) {
    const info = schema.get(table)!
    const userCols = [...info.references].filter(([, ref]) => ref === 'users').map(([c]) => c)
    const arrayCols = USER_ARRAY_COLUMNS[table] ?? []
    const name = tableEntry(table)
    const file = new StagedFile(join(dir, `${table}.json`))
    let n = 0
    await file.write('[')
    for await (const batch of rowsOf(trx, table, build.id)) {
      await personOf(batch.flatMap(r => [...userCols.map(c => r[c]), ...arrayCols.flatMap(c => (r[c] as string[] | null) ?? [])]).filter((x): x is string => typeof x === 'string'))
      const lines = batch.map((r) => {
        for (const c of userCols) r[c] = typeof r[c] === 'string' ? people.get(r[c]) ?? null : null
        for (const c of arrayCols) r[c] = ((r[c] as string[] | null) ?? []).map(id => people.get(id)).filter(Boolean)
        return `${n++ === 0 ? '' : ','}\n${JSON.stringify(r)}`
      })
      await file.write(lines.join(''))
    }
    await file.write('\n]\n')
    counts[table] = n
    entries.push({ name, path: file.path, ...await file.close() })
  }
  // the two CSVs a person can open as they are
  const readings = new StagedFile(join(dir, 'readings.csv'))
  for await (const chunk of readingsCsv(trx, build)) await readings.write(chunk as string)
  entries.push({ name: 'readings.csv', path: readings.path, ...await readings.close() })
  const scoreboard = new StagedFile(join(dir, 'scoreboard.csv'))
  await scoreboard.write(await scoreboardCsv(trx, build))
  entries.push({ name: 'scoreboard.csv', path: scoreboard.path, ...await scoreboard.close() })
  // the evidence files' bytes, as their rows describe them
  const files = await trx('files').where({ build_id: build.id }).orderBy('id').select('id', 'storage_key', 'size', 'sha256')
  for (const f of files) entries.push({ name: `files/${f.id}`, size: Number(f.size), sha256: f.sha256, storageKey: f.storage_key })
  counts.evidenceFiles = files.length
  return { entries, counts }
}

export interface BuildArchive {
  /** the archive's bytes (tar.gz), produced as they are read */
  stream: Readable
  filename: string
}

/** The archive of `build` (the handler checked the caller's role). */
export async function exportBuildArchive(db: Knex, actor: Actor, input: { build: BuildRow }): Promise<BuildArchive> {
  const { build } = input
  const dir = await fsp.mkdtemp(join(tmpdir(), 'ratchet-export-'))
  let staged: Awaited<ReturnType<typeof stage>>
  try {
    staged = await db.transaction(async (trx) => {
      const s = await stage(trx, build, dir)
      return s
    }, { isolationLevel: 'repeatable read', readOnly: true })
    await recordAudit(db, actor, { action: 'build.exported', teamId: build.team_id, detail: { build: build.slug, counts: staged.counts } })
  }
  catch (err) {
    await fsp.rm(dir, { recursive: true, force: true })
    throw err
  }
  const manifest: ArchiveManifest = {
    format: ARCHIVE_FORMAT,
    version: ARCHIVE_VERSION,
    exportedAt: new Date().toISOString(),
    build: { name: build.name, slug: build.slug },
    counts: staged.counts,
    files: staged.entries.map(({ name, size, sha256 }) => ({ name, size, sha256 })),
  }
  const out = new PassThrough()
  const tar = tarPack()
  const store = useFileStore()
  const mtime = new Date()
  let current: Readable | null = null
  let closed = false
  // a client that goes away ends the stream: stop reading, and the temporary files go
  out.once('close', () => {
    closed = true
    current?.destroy()
    tar.destroy()
    void fsp.rm(dir, { recursive: true, force: true })
  })
  const write = async () => {
    const head = Buffer.from(`${JSON.stringify(manifest, null, 1)}\n`)
    await new Promise<void>((resolve, reject) => tar.entry({ name: MANIFEST_NAME, size: head.length, mtime }, head, err => (err ? reject(err) : resolve())))
    for (const e of staged.entries) {
      if (closed) return
      const source = e.path ? createReadStream(e.path) : await store.get(e.storageKey!)
      current = source
      await new Promise<void>((resolve, reject) => {
        const sink = tar.entry({ name: e.name, size: e.size, mtime }, err => (err ? reject(err) : resolve()))
        source.on('error', (err) => {
          sink.destroy(err)
          reject(err)
        })
        source.pipe(sink as unknown as Writable)
      })
    }
    tar.finalize()
  }
  pipeline(tar as unknown as Readable, createGzip({ level: 1 }), out).catch(err => out.destroy(err))
  write().catch((err) => {
    if (!closed) console.error(`archive: exporting ${build.slug} failed:`, err)
    out.destroy(err as Error)
  })
  return { stream: out, filename: `${build.slug}-archive.tar.gz` }
}
