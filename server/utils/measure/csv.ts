import { existsSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { Readable } from 'node:stream'
import { fileURLToPath } from 'node:url'
import { Worker } from 'node:worker_threads'
import { createError, setResponseHeader, type H3Event } from 'h3'
import type { Knex } from 'knex'
import Papa from 'papaparse'
import type { z } from 'zod'
import type { CsvImported, CsvPreview } from '#shared/types/files'
import { kindOf } from '#shared/utils/contentTypes'
import { problemsMessage } from '#shared/utils/csvReadings'
import { formatBytes } from '#shared/utils/fileNames'
import type { CsvImportBody } from '#shared/utils/fileSchemas'
import { diffFromSI, siUnitOf, diffToSI, type Quantity } from '#shared/utils/units'
import type { BuildRow, FileRow, StoredTrack } from '../../db/tables'
import { recordAudit, type Actor } from '../audit'
import type { Db } from '../db'
import { insertReading } from './readings'
import { runCsvJob, type CsvJob, type CsvPlanned, type CsvPreviewParsed } from './csvParse'
import { buildScoreboard } from './scoreboard'
import { findTarget } from './targets'

// CSV in and out: readings imported from an instrument's CSV (an uploaded evidence file) in one
// transaction through the same reading service as the API, and a build's readings and
// scoreboard exported. Parsing and quoting are papaparse's; the row checks are
// shared/utils/csvReadings.ts. Parsing and checking an uploaded file (csvParse.ts) run in a worker
// thread, a few files at a time per server, so a large file doesn't hold up other requests.

/** The largest CSV the import reads (it is parsed in memory; 100,000 rows take about 3 MB). */
export const CSV_IMPORT_MAX_BYTES = 20_000_000

/** The file's bytes, after the checks that it is a text file small enough to import. */
export async function readStoredBytes(file: FileRow, max = CSV_IMPORT_MAX_BYTES): Promise<Buffer> {
  if (kindOf(file.content_type) !== 'text') {
    throw createError({ statusCode: 422, message: `"${file.name}" is not a text file (${file.content_type}); import readings from a CSV file`, data: { fields: { file: 'Not a CSV file' } } })
  }
  if (Number(file.size) > max) {
    throw createError({ statusCode: 422, message: `"${file.name}" is ${formatBytes(Number(file.size))}; the import reads CSV files up to ${formatBytes(max)}`, data: { fields: { file: 'Too large to import' } } })
  }
  const chunks: Buffer[] = []
  for await (const chunk of await useFileStore().get(file.storage_key)) chunks.push(chunk as Buffer)
  return Buffer.concat(chunks)
}

/** CSV jobs (previews and imports) parsed at once by this server, and how many more may wait. */
export const CSV_JOBS_RUNNING = 2
export const CSV_JOBS_WAITING = 2
export const CSV_BUSY_RETRY_AFTER_SECONDS = 5

/** For a handler's catch: a 503 from a full CSV queue gets its Retry-After header; rethrows. */
export function csvBusy(event: H3Event, err: unknown): never {
  const retry = (err as { statusCode?: number, data?: { retryAfter?: number } }).data?.retryAfter
  if ((err as { statusCode?: number }).statusCode === 503 && retry) setResponseHeader(event, 'Retry-After', retry)
  throw err
}

let running = 0
const waiting: (() => void)[] = []

/**
 * A turn to parse a CSV: at most CSV_JOBS_RUNNING at once, CSV_JOBS_WAITING more queued, and
 * past that a 503 whose `data.retryAfter` the handler sends as Retry-After. Call the returned
 * function when done (the next waiting job starts).
 */
async function csvTurn(): Promise<() => void> {
  if (running >= CSV_JOBS_RUNNING) {
    if (waiting.length >= CSV_JOBS_WAITING) {
      throw createError({ statusCode: 503, message: `The server is reading ${running} other CSV files; try again in a few seconds`, data: { retryAfter: CSV_BUSY_RETRY_AFTER_SECONDS } })
    }
    await new Promise<void>(resolve => waiting.push(resolve))
  }
  else {
    running++
  }
  let done = false
  return () => {
    if (done) return
    done = true
    const next = waiting.shift()
    if (next) next() // the turn passes on: `running` stays
    else running--
  }
}

// The worker script, built beside the server bundle (nuxt.config.ts); missing when the server
// runs from source (nuxt dev), where the job runs on the main thread instead.
let workerScript: string | null | undefined
function findWorkerScript(): string | null {
  if (workerScript !== undefined) return workerScript
  workerScript = null
  let dir = dirname(fileURLToPath(import.meta.url))
  for (let up = 0; up < 5; up++) {
    const candidate = join(dir, 'workers', 'csv.mjs')
    if (existsSync(candidate)) return (workerScript = candidate)
    dir = dirname(dir)
  }
  return workerScript
}

/** Parse and check a CSV in a worker thread, so the event loop keeps answering other requests. */
function inWorker<T>(job: CsvJob): Promise<T> {
  const script = findWorkerScript()
  if (!script) return Promise.resolve(runCsvJob(job) as T)
  return new Promise<T>((resolve, reject) => {
    const worker = new Worker(script)
    let settled = false
    const settle = (fn: () => void) => {
      if (settled) return
      settled = true
      fn()
      void worker.terminate()
    }
    worker.once('message', (m: { ok: true, result: T } | { ok: false, message: string }) =>
      settle(() => (m.ok ? resolve(m.result) : reject(new Error(`CSV worker: ${m.message}`)))))
    worker.once('error', err => settle(() => reject(err)))
    worker.once('exit', code => settle(() => reject(new Error(`CSV worker stopped (exit code ${code})`))))
    // the bytes move to the worker rather than being copied
    const bytes = new Uint8Array(job.bytes.byteLength)
    bytes.set(job.bytes)
    worker.postMessage({ ...job, bytes }, [bytes.buffer])
  })
}

async function buildFile(db: Db, buildId: string, id: string): Promise<FileRow> {
  const file = await db('files').where({ id, build_id: buildId }).first()
  if (!file) throw createError({ statusCode: 404, message: 'file: no such file in this build', data: { fields: { file: 'Not found in this build' } } })
  return file
}

/** GET /api/builds/:build/import/preview: the header, the first rows, and a guess at the columns. */
export async function previewCsv(db: Db, buildId: string, fileId: string): Promise<CsvPreview> {
  const file = await buildFile(db, buildId, fileId)
  const base = { file: { id: file.id, name: file.name, size: Number(file.size) } }
  const release = await csvTurn()
  try {
    let bytes: Buffer
    try {
      bytes = await readStoredBytes(file)
    }
    catch (err) {
      if ((err as { statusCode?: number }).statusCode !== 422) throw err
      return { ...base, delimiter: ',', headerLine: 1, columns: [], rows: [], totalRows: 0, guess: { value: null, unit: null, time: null, revision: null, u: null, dof: null }, problem: (err as Error).message }
    }
    return { ...base, ...await inWorker<CsvPreviewParsed>({ kind: 'preview', bytes }) }
  }
  finally {
    release()
  }
}

/**
 * POST /api/builds/:build/import: every row checked first (422 naming the lines), then one
 * reading per revision and unit in one transaction, through insertReading so the cached
 * statistics follow. The file is attached to the first reading and can't be imported twice.
 */
export async function importCsv(db: Db, actor: Actor, input: { build: Pick<BuildRow, 'id' | 'team_id' | 'slug'>, body: z.output<typeof CsvImportBody> }): Promise<CsvImported> {
  const { build, body } = input
  const file = await buildFile(db, build.id, body.file)
  if (file.reading_id) {
    throw createError({ statusCode: 409, message: `"${file.name}" was imported already; delete that reading first to import the file again`, data: { fields: { file: 'Imported already' } } })
  }
  const target = await findTarget(db, build.id, body.target)
  const release = await csvTurn()
  let planned: CsvPlanned
  try {
    planned = await inWorker<CsvPlanned>({
      kind: 'plan',
      bytes: await readStoredBytes(file),
      columns: { value: body.valueColumn, unit: body.unitColumn, time: body.timeColumn, revision: body.revisionColumn, u: body.uColumn, dof: body.dofColumn },
      defaults: { revision: body.revision, unit: body.unit, targetUnit: target.unit },
    })
  }
  finally {
    release()
  }
  const { plan, problems } = planned
  let problemCount = planned.problemCount

  // revisions the file names must exist and be open
  if (problemCount === 0) {
    const labels = [...new Set(plan.groups.map(g => g.revision.toLowerCase()))]
    const found = await db('revisions').where({ build_id: build.id }).whereRaw('lower(label) = ANY(?)', [labels])
      .select('label', 'frozen_at')
    const byLabel = new Map(found.map(r => [r.label.toLowerCase(), r]))
    for (const g of plan.groups) {
      const rev = byLabel.get(g.revision.toLowerCase())
      const message = !rev
        ? `Line ${g.firstLine}: revision "${g.revision}" is not in this build`
        : rev.frozen_at ? `Line ${g.firstLine}: revision ${rev.label} is signed off; an Owner must reopen it to add readings` : null
      if (message && !problems.some(p => p.message === message)) {
        problems.push({ line: g.firstLine, message })
        problemCount++
      }
    }
  }
  if (problemCount > 0) {
    throw createError({ statusCode: 422, message: problemsMessage(problems, problemCount), data: { problems: problems.slice(0, 20), problemCount } })
  }

  const resolutionUnit = body.unit ?? plan.groups[0]?.unit ?? target.unit
  const method = (body.method || `CSV import of ${file.name}`).slice(0, 200)
  const readings = await (db as Knex).transaction(async (trx) => {
    const free = await trx('files').where({ id: file.id }).whereNull('reading_id').forUpdate().first('id', 'revision_id')
    if (!free) throw createError({ statusCode: 409, message: `"${file.name}" was imported already`, data: { fields: { file: 'Imported already' } } })
    const out: CsvImported['readings'] = []
    for (const g of plan.groups) {
      const common = {
        revision: g.revision,
        target: target.key,
        unit: g.unit,
        method,
        takenAt: g.takenAt ?? undefined,
        notes: g.stated ? `Imported from ${file.name}, line ${g.firstLine}` : `Imported from ${file.name}, lines ${g.firstLine}–${g.lastLine}`,
      }
      // a stated result carries its own uncertainty: the instrument resolution is for samples
      const created = g.stated
        ? await insertReading(trx, actor, { buildId: build.id, body: { ...common, value: g.values[0]!, u: g.stated.u, dof: g.stated.dof } })
        : await insertReading(trx, actor, { buildId: build.id, body: {
            ...common,
            values: g.values,
            resolution: body.resolution ? diffFromSI(diffToSI(body.resolution, resolutionUnit), g.unit) : null,
          } })
      out.push({ ...created, revision: g.revision, unitEntered: g.unit, n: g.values.length, firstLine: g.firstLine, lastLine: g.lastLine })
    }
    const first = (await trx('readings').where({ id: out[0]!.reading.id }).first('revision_id'))!
    await trx('files').where({ id: file.id }).update({ reading_id: out[0]!.reading.id, revision_id: free.revision_id ?? first.revision_id })
    await recordAudit(trx, actor, {
      action: 'readings.imported',
      teamId: build.team_id,
      detail: { build: build.slug, file: file.id, target: target.key, rows: plan.rows, readings: out.map(r => r.reading.id) },
    })
    return out
  })
  return { file: { id: file.id, name: file.name }, rows: plan.rows, readings }
}

/**
 * The readings export's columns. The first eleven are those of every earlier version, in the same
 * order; kind, u, u_si and dof were added for stated results (u and dof blank for samples, dof
 * blank when infinite), then track for track readings (their points as JSON, {timeUnit, unit,
 * points: [{t, x, frame?}], file}; blank for other kinds). Importing the file with the u and dof
 * columns gives the readings back (a track as the stated result it gave).
 */
export const READINGS_CSV_COLUMNS = ['build', 'target', 'revision', 'reading', 'sample', 'value', 'unit', 'value_si', 'si_unit', 'taken_at', 'method', 'kind', 'u', 'u_si', 'dof', 'track']

const unparse = (rows: unknown[][]) => Papa.unparse(rows, { escapeFormulae: true, newline: '\r\n' })

/** Every sample of the build's readings, as entered and in SI, one CSV row each (streamed). */
export function readingsCsv(db: Db, build: { id: string, slug: string }): Readable {
  async function* rows() {
    yield `${unparse([READINGS_CSV_COLUMNS])}\r\n`
    const ids = await db('readings as rd').join('targets as t', 't.id', 'rd.target_id').join('revisions as rv', 'rv.id', 'rd.revision_id')
      .where('t.build_id', build.id)
      .orderBy([{ column: 't.position' }, { column: 't.key' }, { column: 'rv.seq' }, { column: 'rd.taken_at' }, { column: 'rd.created_at' }, { column: 'rd.id' }])
      .pluck('rd.id') as string[]
    for (let i = 0; i < ids.length; i += 200) {
      const batch = ids.slice(i, i + 200)
      const found = await db('readings as rd').join('targets as t', 't.id', 'rd.target_id').join('revisions as rv', 'rv.id', 'rd.revision_id')
        .whereIn('rd.id', batch)
        .select('rd.id', 't.key', 't.quantity', 'rv.label', 'rd.values_entered', 'rd.values_si', 'rd.unit_entered', 'rd.taken_at', 'rd.method',
          'rd.stated_u_entered', 'rd.stated_u_si', 'rd.stated_dof', 'rd.track') as {
        id: string
        key: string
        quantity: Quantity
        label: string
        values_entered: number[]
        values_si: number[]
        unit_entered: string
        taken_at: Date
        method: string
        stated_u_entered: number | null
        stated_u_si: number | null
        stated_dof: number | null
        track: StoredTrack | null
      }[]
      const byId = new Map(found.map(r => [r.id, r]))
      const lines: unknown[][] = []
      for (const id of batch) {
        const r = byId.get(id)
        if (!r) continue
        const at = new Date(r.taken_at).toISOString()
        const stated = r.stated_u_si === null
          ? ['samples', null, null, null, null]
          : [r.track ? 'track' : 'stated', r.stated_u_entered, r.stated_u_si, r.stated_dof, r.track ? JSON.stringify(r.track) : null]
        r.values_entered.forEach((v, k) => lines.push([build.slug, r.key, r.label, r.id, k + 1, v, r.unit_entered, r.values_si[k], siUnitOf(r.quantity), at, r.method, ...stated]))
      }
      if (lines.length) yield `${unparse(lines)}\r\n`
    }
  }
  return Readable.from(rows())
}

export const SCOREBOARD_CSV_COLUMNS = ['build', 'target', 'name', 'revision', 'unit', 'comparator', 'threshold', 'threshold_high', 'n', 'readings',
  'mean', 'sd', 'u', 'ci_low', 'ci_high', 'status', 'movement', 'delta', 'p']

/** One row per target and revision (the readings matrix), numbers in the target's display unit. */
export async function scoreboardCsv(db: Db, build: Parameters<typeof buildScoreboard>[1]): Promise<string> {
  const board = await buildScoreboard(db, build)
  const lines: unknown[][] = [SCOREBOARD_CSV_COLUMNS]
  for (const t of board.targets) {
    const byRevision = new Map(t.history.map(h => [h.revision, h]))
    for (const label of board.revisions) {
      const h = byRevision.get(label)
      lines.push([
        board.build.slug, t.key, t.name, label, t.unit, t.comparator, t.threshold, t.thresholdHigh,
        h?.n ?? 0, h?.readings ?? 0, h?.mean, h?.sd, h?.u, h?.ci95?.[0], h?.ci95?.[1],
        h?.status ?? 'untested', h?.movement, h?.delta, h?.p,
      ])
    }
  }
  return `${unparse(lines)}\r\n`
}
