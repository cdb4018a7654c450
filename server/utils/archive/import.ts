import { createHash, randomUUID } from 'node:crypto'
import type { IncomingHttpHeaders, IncomingMessage } from 'node:http'
import { Readable, Transform, type TransformCallback } from 'node:stream'
import { createGunzip } from 'node:zlib'
import { createError } from 'h3'
import type { Knex } from 'knex'
import { extract as tarExtract } from 'tar-stream'
import { z } from 'zod'
import { slugify } from '#shared/utils/accountSchemas'
import { ArchiveImportFields } from '#shared/utils/buildSchemas'
import { poolCell } from '#shared/utils/cellStats'
import { formatBytes } from '#shared/utils/fileNames'
import { MAX_SAMPLES, StatsOverflowError } from '#shared/utils/readingStats'
import { assertSameQuantity, parseUnit } from '#shared/utils/units'
import type { TeamRow } from '../../db/tables'
import { insertWithSlug } from '../access/accounts'
import { recordAudit, type Actor } from '../audit'
import { readMultipart } from '../files/multipart'
import { filesConfig, newStorageKey, useFileStore, type FileStore } from '../files/storage'
import { teamUsage } from '../files/uploads'
import { checkTargetFormula } from '../measure/formulas'
import { cellRowOf, redecideTarget, type CellTarget } from '../measure/statsCache'
import { parseOr400 } from '../validate'
import {
  ARCHIVE_FORMAT, ARCHIVE_TABLES, ARCHIVE_VERSION, CSV_ENTRIES, FILE_ENTRY, MANIFEST_NAME, USER_ARRAY_COLUMNS,
  archiveSchema, tableEntry, type ArchivePerson, type ArchiveTable, type ManifestEntry,
} from './format'

// POST /api/v1/teams/:team/import: a build archive (docs/archive.md) becomes a new build of the
// team. The upload is read as it streams in: gunzip, then tar, each entry checked against the
// manifest that comes first (name, size, sha256); evidence bytes go straight to the file store
// under fresh keys, the rows (JSON) are held until the end. Then every row is inserted in one
// transaction with fresh ids and rewritten references. Anything wrong refuses the whole archive
// with a 4xx naming the problem, and the bytes already stored are removed.

/** An archive may expand to at most this many times the upload limit. */
export const ARCHIVE_EXPANSION = 4
/** …and to at most this many times its compressed size (past the first MiB): a bomb otherwise. */
export const ARCHIVE_MAX_RATIO = 200
/** The rows (the tables' JSON) are held in memory: at most this many bytes of them. */
export const ARCHIVE_ROWS_MAX_BYTES = 64 * 1024 * 1024
const MANIFEST_MAX_BYTES = 16 * 1024 * 1024
const RATIO_GRACE = 1024 * 1024
const BATCH = 500

type Row = Record<string, unknown>

const bad = (message: string, statusCode = 400) => createError({ statusCode, message, data: { fields: { file: message } } })
const refused = (message: string) => bad(message, 422)
const tooBig = (message: string) => bad(message, 413)

/** Counts the bytes that pass; `check` may refuse with an error. */
class Counter extends Transform {
  bytes = 0
  constructor(private check: (bytes: number) => Error | null) {
    super()
  }

  override _transform(chunk: Buffer, _e: BufferEncoding, done: TransformCallback) {
    this.bytes += chunk.length
    done(this.check(this.bytes), chunk)
  }
}

const ManifestSchema = z.object({
  format: z.literal(ARCHIVE_FORMAT),
  version: z.number().int().min(1),
  exportedAt: z.string(),
  build: z.object({ name: z.string(), slug: z.string() }),
  counts: z.record(z.string(), z.number()),
  files: z.array(z.object({ name: z.string().max(300), size: z.number().int().min(0), sha256: z.string().regex(/^[0-9a-f]{64}$/) })),
})

/** The manifest's text, checked: a foreign archive and a newer format are refused by name. */
function readManifest(text: string) {
  let raw: unknown
  try {
    raw = JSON.parse(text)
  }
  catch {
    throw refused('manifest.json is not JSON: this is not a Ratchet build archive')
  }
  const head = raw as { format?: unknown, version?: unknown } | null
  if (!head || typeof head !== 'object' || head.format !== ARCHIVE_FORMAT) {
    throw refused(`manifest.json does not name the format "${ARCHIVE_FORMAT}": this is not a Ratchet build archive`)
  }
  if (typeof head.version === 'number' && head.version > ARCHIVE_VERSION) {
    throw refused(`The archive is of format version ${head.version}, made by a newer Ratchet; this server reads version ${ARCHIVE_VERSION}. Update Ratchet to import it`)
  }
  const parsed = ManifestSchema.safeParse(raw)
  if (!parsed.success) throw refused(`manifest.json is malformed (${parsed.error.issues[0]?.path.join('.') || 'its fields'}): the archive can’t be read`)
  return parsed.data
}

/** What an entry name is: the manifest, a table, a CSV or an evidence file; refused otherwise. */
function assertSafeName(name: string) {
  if (/^(\/|\\|[A-Za-z]:)/.test(name)) throw bad(`The archive’s entry "${name.slice(0, 100)}" is an absolute path; entries are named inside the archive only`)
  if (name.split(/[\\/]/).includes('..')) throw bad(`The archive’s entry "${name.slice(0, 100)}" names a parent folder (".."); refused`)
}

function entryKind(name: string): { kind: 'manifest' } | { kind: 'table', table: ArchiveTable } | { kind: 'csv' } | { kind: 'file', id: string } {
  assertSafeName(name)
  if (name === MANIFEST_NAME) return { kind: 'manifest' }
  const table = ARCHIVE_TABLES.find(t => tableEntry(t) === name)
  if (table) return { kind: 'table', table }
  if ((CSV_ENTRIES as readonly string[]).includes(name)) return { kind: 'csv' }
  const file = FILE_ENTRY.exec(name)
  if (file) return { kind: 'file', id: file[1]! }
  throw bad(`The archive has an entry Ratchet doesn’t know: "${name.slice(0, 100)}"`)
}

interface ReadArchive {
  manifest: z.output<typeof ManifestSchema>
  tables: Map<ArchiveTable, Row[]>
  /** evidence bytes stored, by the file's id in the archive */
  files: Map<string, { key: string, size: number, sha256: string }>
}

interface Limits { compressed: number, uncompressed: number, quotaRoom: number }

/** Reads the archive from the upload's stream; `stored` collects the keys written, for cleanup. */
async function readArchive(stream: Readable, store: FileStore, limits: Limits, stored: string[], signal: AbortSignal): Promise<ReadArchive> {
  const compressed = new Counter(n => (n > limits.compressed ? tooBig(`The archive is larger than the upload limit of ${formatBytes(limits.compressed)}`) : null))
  const expanded = new Counter((n) => {
    if (n > limits.uncompressed) return tooBig(`The archive expands past ${formatBytes(limits.uncompressed)} (${ARCHIVE_EXPANSION} times the upload limit); refused as a decompression bomb`)
    if (n > RATIO_GRACE && n > ARCHIVE_MAX_RATIO * compressed.bytes) return tooBig(`The archive expands more than ${ARCHIVE_MAX_RATIO} times its compressed size; refused as a decompression bomb`)
    return null
  })
  const gunzip = createGunzip()
  const extract = tarExtract()
  const fail = (err: Error) => extract.destroy(err)
  stream.on('error', fail)
  compressed.on('error', fail)
  expanded.on('error', fail)
  gunzip.on('error', () => fail(bad('The archive is truncated or corrupt: it is not a complete gzip stream')))
  const onAbort = () => fail(signal.reason as Error)
  signal.addEventListener('abort', onAbort, { once: true })
  stream.pipe(compressed).pipe(gunzip).pipe(expanded).pipe(extract as never)

  let manifest: ReadArchive['manifest'] | null = null
  const listed = new Map<string, ManifestEntry>()
  const seen = new Set<string>()
  const tables = new Map<ArchiveTable, Row[]>()
  const files: ReadArchive['files'] = new Map()
  let rowBytes = 0
  try {
    for await (const entry of extract) {
      const { name, type, size } = entry.header
      assertSafeName(name)
      if (!manifest && name !== MANIFEST_NAME) throw refused('The archive does not begin with manifest.json: this is not a Ratchet build archive')
      const what = entryKind(name)
      if (type !== 'file') throw bad(`The archive’s entry "${name.slice(0, 100)}" is a ${type}; an archive holds plain files only`)
      if (!manifest) {
        if (size > MANIFEST_MAX_BYTES) throw refused('manifest.json is too large')
        const chunks: Buffer[] = []
        for await (const c of entry) chunks.push(c as Buffer)
        manifest = readManifest(Buffer.concat(chunks).toString('utf8'))
        let total = 0
        let evidence = 0
        for (const f of manifest.files) {
          if (listed.has(f.name)) throw refused(`manifest.json lists "${f.name.slice(0, 100)}" twice`)
          const k = entryKind(f.name)
          if (k.kind === 'manifest') throw refused('manifest.json lists itself')
          listed.set(f.name, f)
          total += f.size
          if (k.kind === 'file') evidence += f.size
        }
        if (total > limits.uncompressed) throw tooBig(`The archive declares ${formatBytes(total)} of contents, more than the ${formatBytes(limits.uncompressed)} an import may expand to`)
        if (evidence > limits.quotaRoom) throw tooBig(`The archive’s evidence files (${formatBytes(evidence)}) don’t fit in the team’s storage quota (${formatBytes(limits.quotaRoom)} left)`)
        continue
      }
      const declared = listed.get(name)
      if (!declared) throw refused(`The archive’s entry "${name.slice(0, 100)}" is not in its manifest`)
      if (seen.has(name)) throw refused(`The archive holds "${name.slice(0, 100)}" twice`)
      seen.add(name)
      if (declared.size !== size) throw refused(`"${name}" is ${size} bytes in the archive, but its manifest says ${declared.size}`)
      const hash = createHash('sha256')
      let got = 0
      if (what.kind === 'file') {
        const key = newStorageKey()
        stored.push(key)
        const bytes = async function* () {
          for await (const c of entry) {
            hash.update(c as Buffer)
            got += (c as Buffer).length
            yield c as Buffer
          }
        }
        try {
          await store.put(key, Readable.from(bytes()))
        }
        catch (err) {
          // the archive's own faults come with their status; anything else is the store
          if ((err as { statusCode?: number }).statusCode || signal.aborted || extract.destroyed) throw err
          console.error(`archive: storing ${key} failed:`, err)
          throw createError({ statusCode: 503, message: 'The archive’s files can’t be stored right now; try again in a while' })
        }
        files.set(what.id, { key, size: got, sha256: hash.digest('hex') })
        if (files.get(what.id)!.sha256 !== declared.sha256) throw refused(`"${name}" does not match its sha256 in the manifest: the file is damaged`)
      }
      else {
        const chunks: Buffer[] = []
        for await (const c of entry) {
          hash.update(c as Buffer)
          got += (c as Buffer).length
          if (what.kind === 'table') {
            rowBytes += (c as Buffer).length
            if (rowBytes > ARCHIVE_ROWS_MAX_BYTES) throw tooBig(`The archive’s rows are larger than ${formatBytes(ARCHIVE_ROWS_MAX_BYTES)}; an import reads at most that`)
            chunks.push(c as Buffer)
          }
        }
        if (hash.digest('hex') !== declared.sha256) throw refused(`"${name}" does not match its sha256 in the manifest: the file is damaged`)
        if (what.kind === 'table') {
          let rows: unknown
          try {
            rows = JSON.parse(Buffer.concat(chunks).toString('utf8'))
          }
          catch {
            throw refused(`"${name}" is not JSON`)
          }
          if (!Array.isArray(rows) || rows.some(r => !r || typeof r !== 'object' || Array.isArray(r))) throw refused(`"${name}" is not a list of rows`)
          tables.set(what.table, rows as Row[])
        }
      }
      if (got !== size) throw refused(`"${name}" is shorter than its header says`)
    }
  }
  catch (err) {
    if ((err as { statusCode?: number }).statusCode) throw err
    if (signal.aborted) throw signal.reason
    throw bad('The archive is truncated or corrupt: it is not a readable tar.gz')
  }
  finally {
    signal.removeEventListener('abort', onAbort)
  }
  if (!manifest) throw refused('The archive is empty: it has no manifest.json, so it is not a Ratchet build archive')
  const missing = [...listed.keys()].filter(n => !seen.has(n))
  if (missing.length) throw refused(`The archive lacks ${missing.length === 1 ? `"${missing[0]}"` : `${missing.length} entries (first "${missing[0]}")`}, listed in its manifest: it may be truncated`)
  for (const t of ARCHIVE_TABLES) if (!tables.has(t)) throw refused(`The archive lacks tables/${t}.json`)
  return { manifest, tables, files }
}

/** A database refusal of a row (a check, a type, a missing reference) as a 422 naming the table. */
function rowProblem(err: unknown, table: string): Error {
  const e = err as { code?: string, constraint?: string, message?: string, statusCode?: number }
  if (e.statusCode) return err as Error
  if (err instanceof StatsOverflowError) return refused(`tables/readings.json: ${err.message}`)
  if (typeof e.code === 'string' && /^(22|23)/.test(e.code)) {
    return refused(`tables/${table}.json: a row breaks a rule of the database (${e.constraint ?? e.message?.split('\n')[0] ?? e.code}); nothing was imported`)
  }
  return err as Error
}

/** Inserts the archive's rows as a new build of `team`, every id fresh; returns the build. */
async function insertRows(trx: Knex.Transaction, actor: Actor, input: { team: Pick<TeamRow, 'id'>, name?: string, archive: ReadArchive }) {
  const { archive, team } = input
  const schema = await archiveSchema(trx)
  let current = 'builds'
  try {
    // people: matched to users by e-mail
    const emails = new Set<string>()
    const collect = (p: unknown) => {
      const person = p as ArchivePerson | null
      if (person && typeof person === 'object' && typeof person.email === 'string') emails.add(person.email.toLowerCase())
    }
    for (const table of ARCHIVE_TABLES) {
      const info = schema.get(table)!
      const userCols = [...info.references].filter(([, r]) => r === 'users').map(([c]) => c)
      for (const row of archive.tables.get(table)!) {
        for (const c of userCols) collect(row[c])
        for (const c of USER_ARRAY_COLUMNS[table] ?? []) if (Array.isArray(row[c])) (row[c] as unknown[]).forEach(collect)
      }
    }
    const users = emails.size ? await trx('users').whereRaw('lower(email) = ANY(?)', [[...emails]]).select('id', 'email') : []
    const userOf = new Map(users.map(u => [u.email.toLowerCase(), u.id]))
    const personId = (p: unknown): string | null => {
      const person = p as ArchivePerson | null
      return person && typeof person === 'object' && typeof person.email === 'string' ? userOf.get(person.email.toLowerCase()) ?? null : null
    }
    const unmatchedName = (p: unknown): string | null => {
      const person = p as ArchivePerson | null
      if (!person || typeof person !== 'object' || personId(person)) return null
      return typeof person.name === 'string' && person.name.trim() ? person.name.trim().slice(0, 120) : null
    }

    // fresh ids for every row with a uuid id, so references can point forward
    const ids = new Map<string, Map<string, string>>()
    for (const table of ARCHIVE_TABLES) {
      const info = schema.get(table)!
      const map = new Map<string, string>()
      if (info.columns.get('id')?.type === 'uuid') {
        for (const row of archive.tables.get(table)!) {
          if (typeof row.id !== 'string') throw refused(`tables/${table}.json: a row has no id`)
          if (map.has(row.id)) throw refused(`tables/${table}.json: the id ${row.id} is there twice`)
          map.set(row.id, randomUUID())
        }
      }
      ids.set(table, map)
    }
    const builds = archive.tables.get('builds')!
    if (builds.length !== 1) throw refused(`tables/builds.json holds ${builds.length} builds; an archive holds one`)
    const buildId = ids.get('builds')!.get(builds[0]!.id as string)!

    // the product's limits the database doesn't check: a cell pools at most MAX_SAMPLES values
    const perCell = new Map<string, number>()
    for (const r of archive.tables.get('readings')!) {
      const key = `${String(r.target_id)} ${String(r.revision_id)}`
      perCell.set(key, (perCell.get(key) ?? 0) + (Array.isArray(r.values_si) ? r.values_si.length : 0))
    }
    for (const [key, n] of perCell) {
      if (n > MAX_SAMPLES) {
        const [t, rv] = key.split(' ')
        const target = archive.tables.get('targets')!.find(x => x.id === t)?.key ?? t
        const revision = archive.tables.get('revisions')!.find(x => x.id === rv)?.label ?? rv
        throw refused(`tables/readings.json: target "${String(target)}" on revision ${String(revision)} holds ${n.toLocaleString('en')} values; the readings of one target on one revision hold at most ${MAX_SAMPLES.toLocaleString('en')}`)
      }
    }

    /** A row of the archive as the table takes it: known columns only, references rewritten. */
    const convert = (table: ArchiveTable, row: Row, index: number) => {
      const info = schema.get(table)!
      const out: Row = {}
      const later: Row = {}
      for (const [col, value] of Object.entries(row)) {
        const column = info.columns.get(col)
        if (!column || column.serial) continue // a column this server doesn't have; a sequence's number
        const ref = info.references.get(col)
        if (col === 'id' && ids.get(table)!.size) out.id = ids.get(table)!.get(value as string)
        else if (ref === 'users') out[col] = personId(value)
        else if (ref === 'rig_tokens') out[col] = null
        else if (ref === 'teams') out[col] = team.id
        else if (ref && value !== null && value !== undefined) {
          const mapped = ids.get(ref)?.get(value as string)
          if (!mapped) throw refused(`tables/${table}.json, row ${index + 1}: ${col} names a row of ${ref} that is not in the archive`)
          if (ref === table) later[col] = mapped // a reference within the table: set once all rows are in
          else out[col] = mapped
        }
        else if (USER_ARRAY_COLUMNS[table]?.includes(col)) out[col] = (Array.isArray(value) ? value : []).map(personId).filter(Boolean)
        else if ((column.type === 'jsonb' || column.type === 'json') && value !== null && value !== undefined) out[col] = JSON.stringify(value)
        else out[col] = value
      }
      return { out, later }
    }

    // the build itself, under a slug of its own in this installation
    const { out: buildRow } = convert('builds', builds[0]!, 0)
    delete buildRow.slug
    if (input.name) buildRow.name = input.name
    const build = await insertWithSlug<{ id: string, slug: string }>(trx, 'builds', {
      base: slugify(String(builds[0]!.slug ?? builds[0]!.name ?? 'build')),
      row: { ...buildRow, id: buildId, team_id: team.id },
      returning: ['id', 'slug'],
      taken: 'A build with the slug "%s" exists; choose another',
    })

    for (const table of ARCHIVE_TABLES) {
      if (table === 'builds' || table === 'cell_stats') continue // cell_stats: pooled anew below
      current = table
      const rows = archive.tables.get(table)!
      const converted = rows.map((row, i) => convert(table, row, i))
      for (const [i, c] of converted.entries()) {
        const source = rows[i]!
        if (table === 'readings') {
          const who = unmatchedName(source.taken_by)
          if (who) c.out.notes = `${typeof c.out.notes === 'string' && c.out.notes ? `${c.out.notes}\n\n` : ''}Taken by ${who}.`
        }
        if (table === 'finding_comments') {
          const who = unmatchedName(source.author_id)
          if (who && typeof c.out.body === 'string') c.out.body = `*${who} wrote:*\n\n${c.out.body}`.slice(0, 10_000)
        }
        if (table === 'files') {
          const bytes = archive.files.get(source.id as string)
          if (!bytes) throw refused(`tables/files.json, row ${i + 1}: the archive has no files/${String(source.id)}`)
          if (bytes.sha256 !== source.sha256 || bytes.size !== Number(source.size)) throw refused(`files/${String(source.id)} does not match its row in tables/files.json (size or sha256)`)
          c.out.storage_key = bytes.key
        }
        // history, not news: imported events are not sent to anyone again
        if (table === 'events' && schema.get('events')!.columns.has('fanned_out_at')) c.out.fanned_out_at = trx.fn.now()
      }
      for (let i = 0; i < converted.length; i += BATCH) {
        await trx(table as 'targets').insert(converted.slice(i, i + BATCH).map(c => c.out))
      }
      for (const c of converted) {
        if (Object.keys(c.later).length) await trx(table as 'targets').where({ id: c.out.id as string }).update(c.later)
      }
    }
    const fileRows = new Set(archive.tables.get('files')!.map(r => r.id as string))
    const stray = [...archive.files.keys()].find(id => !fileRows.has(id))
    if (stray) throw refused(`files/${stray} has no row in tables/files.json`)

    // what the database can't check: units that can be read, formulas over the build's keys
    // (no circle, the target's quantity), readings in a unit of their target's quantity
    current = 'targets'
    for (const t of await trx('targets').where({ build_id: build.id }).orderBy('position')) {
      try {
        parseUnit(t.unit)
        if (t.formula !== null) await checkTargetFormula(trx, build.id, { key: t.key, unit: t.unit }, t.formula)
      }
      catch (e) {
        throw refused(`tables/targets.json: target "${t.key}": ${(e as Error).message}`)
      }
    }
    current = 'readings'
    const units = await trx('readings as r').join('targets as t', 't.id', 'r.target_id').where('t.build_id', build.id)
      .distinct('r.unit_entered', 't.unit', 't.key') as { unit_entered: string, unit: string, key: string }[]
    for (const u of units) {
      try {
        assertSameQuantity(u.unit_entered, u.unit)
      }
      catch (e) {
        throw refused(`tables/readings.json: a reading of "${u.key}" in "${u.unit_entered}": ${(e as Error).message}`)
      }
    }

    // the statistics cache, pooled from the readings just written (never taken on trust)
    current = 'cell_stats'
    const targets = await trx('targets').where({ build_id: build.id }).whereNull('formula')
    for (const t of targets) {
      const readings = await trx('readings').where({ target_id: t.id }).select('revision_id', 'values_si', 'resolution_si', 'stated_u_si', 'stated_dof')
      if (!readings.length) continue
      const rule: CellTarget = { id: t.id, buildId: build.id, comparator: t.comparator, threshold: t.threshold, thresholdHigh: t.threshold_high, noiseBand: t.noise_band }
      const byRevision = new Map<string, typeof readings>()
      for (const r of readings) byRevision.set(r.revision_id, [...byRevision.get(r.revision_id) ?? [], r])
      const cells = [...byRevision].map(([revisionId, rs]) => cellRowOf(rule, revisionId,
        poolCell(rs.map(r => ({ values: r.values_si, resolution: r.resolution_si, u: r.stated_u_si, dof: r.stated_dof }))),
        { status: 'short', delta: null, p: null, movement: null, real: null, reason: null }))
      await trx('cell_stats').insert(cells)
      await redecideTarget(trx, rule)
    }
    const counts = Object.fromEntries(ARCHIVE_TABLES.map(t => [t, archive.tables.get(t)!.length]))
    await recordAudit(trx, actor, { action: 'build.imported', teamId: team.id, detail: { build: build.slug, from: archive.manifest.build.slug, exportedAt: archive.manifest.exportedAt, counts } })
    return build
  }
  catch (err) {
    throw rowProblem(err, current)
  }
}

/**
 * Reads a build archive from a multipart upload (field `file`, an optional `name` before it) and
 * makes it a new build of `team`: all or nothing.
 */
export async function importBuildArchive(db: Knex, actor: Actor, input: { team: Pick<TeamRow, 'id' | 'slug'>, body: IncomingMessage, headers: IncomingHttpHeaders }): Promise<{ build: { id: string, slug: string } }> {
  const { headers, team } = input
  if (!/^multipart\/form-data\b/i.test(headers['content-type'] ?? '')) {
    throw createError({ statusCode: 400, message: 'Send the archive as multipart/form-data, in a field named "file"' })
  }
  const config = filesConfig()
  const declared = Number(headers['content-length'])
  if (Number.isFinite(declared) && declared > config.maxBytes + 64 * 1024) throw tooBig(`The archive is larger than the upload limit of ${formatBytes(config.maxBytes)}`)
  const quota = config.teamQuotaBytes > 0 ? config.teamQuotaBytes : null
  const quotaRoom = quota === null ? Number.POSITIVE_INFINITY : Math.max(0, quota - await teamUsage(db, team.id))
  const limits: Limits = { compressed: config.maxBytes, uncompressed: config.maxBytes * ARCHIVE_EXPANSION, quotaRoom }
  const store = useFileStore()
  const stored: string[] = []
  try {
    const { fields, file } = await readMultipart<ReadArchive>(input.body, headers, async (stream, _filename, before, signal) => {
      parseOr400(ArchiveImportFields, before)
      return await readArchive(stream, store, limits, stored, signal)
    })
    if (!file) throw createError({ statusCode: 400, message: 'No file: send the archive in a field named "file"', data: { fields: { file: 'Required' } } })
    const { name } = parseOr400(ArchiveImportFields, fields)
    const build = await db.transaction(async (trx) => {
      // one import or upload of a team at a time: the quota check and the inserts agree
      await trx('teams').where({ id: team.id }).forUpdate().first('id')
      if (quota !== null) {
        const used = await teamUsage(trx, team.id)
        const adding = [...file.files.values()].reduce((s, f) => s + f.size, 0)
        if (used + adding > quota) throw tooBig(`The archive’s evidence files (${formatBytes(adding)}) don’t fit in the team’s storage quota (${formatBytes(Math.max(0, quota - used))} left)`)
      }
      return await insertRows(trx, actor, { team, name, archive: file })
    })
    return { build }
  }
  catch (err) {
    await Promise.allSettled(stored.map(key => store.remove(key).catch((e) => {
      console.error(`archive: could not remove ${key} after a refused import (the sweep will):`, e)
    })))
    throw err
  }
}
