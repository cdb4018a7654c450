import { Readable } from 'node:stream'
import { createError } from 'h3'
import type { Knex } from 'knex'
import Papa from 'papaparse'
import type { z } from 'zod'
import type { CsvImported, CsvPreview } from '../../../shared/types/files'
import { kindOf } from '../../../shared/utils/contentTypes'
import { parseNumberCell, parseTimeCell, planCsvImport, problemsMessage, type CsvProblem, type CsvRow } from '../../../shared/utils/csvReadings'
import { formatBytes } from '../../../shared/utils/fileNames'
import type { CsvImportBody } from '../../../shared/utils/fileSchemas'
import { SI_UNIT, diffFromSI, diffToSI, type Quantity } from '../../../shared/utils/units'
import type { BuildRow, FileRow } from '../../db/tables'
import { recordAudit, type Actor } from '../audit'
import type { Db } from '../db'
import { insertReading } from './readings'
import { buildScoreboard } from './scoreboard'
import { findTarget } from './targets'

// CSV in and out: readings imported from an instrument's CSV (an uploaded evidence file) in one
// transaction through the same reading service as the API, and a build's readings and
// scoreboard exported. Parsing and quoting are papaparse's; the row checks are
// shared/utils/csvReadings.ts.

/** The largest CSV the import reads (it is parsed in memory; 100,000 rows take about 3 MB). */
export const CSV_IMPORT_MAX_BYTES = 20_000_000
const PREVIEW_ROWS = 20
const DELIMITERS = [',', ';', '\t', '|']

export interface ParsedCsv {
  delimiter: string
  headerLine: number
  header: string[]
  rows: CsvRow[]
  problems: CsvProblem[]
}

/** The file's text: UTF-8 (a byte-order mark dropped), or Latin-1 when it isn't valid UTF-8. */
export async function readStoredText(file: FileRow, max = CSV_IMPORT_MAX_BYTES): Promise<string> {
  if (kindOf(file.content_type) !== 'text') {
    throw createError({ statusCode: 422, message: `"${file.name}" is not a text file (${file.content_type}); import readings from a CSV file`, data: { fields: { file: 'Not a CSV file' } } })
  }
  if (Number(file.size) > max) {
    throw createError({ statusCode: 422, message: `"${file.name}" is ${formatBytes(Number(file.size))}; the import reads CSV files up to ${formatBytes(max)}`, data: { fields: { file: 'Too large to import' } } })
  }
  const chunks: Buffer[] = []
  for await (const chunk of await useFileStore().get(file.storage_key)) chunks.push(chunk as Buffer)
  const bytes = Buffer.concat(chunks)
  const body = bytes[0] === 0xEF && bytes[1] === 0xBB && bytes[2] === 0xBF ? bytes.subarray(3) : bytes
  try {
    return new TextDecoder('utf-8', { fatal: true }).decode(body)
  }
  catch {
    return body.toString('latin1')
  }
}

/**
 * Rows of a CSV with the line each starts on. Blank rows are skipped; lines before the header
 * (an instrument's preamble) too: the header is the first row with as many cells as most of the
 * first rows have. The delimiter is the one those first lines use most (comma when none).
 */
export function parseCsvText(raw: string): ParsedCsv {
  const text = raw.replace(/\r\n?/g, '\n')
  const firstLines = text.split('\n', 60).filter(l => l.trim() !== '')
  const counts = DELIMITERS.map(d => firstLines.reduce((n, l) => n + l.split(d).length - 1, 0))
  const best = Math.max(...counts)
  const delimiter = best > 0 ? DELIMITERS[counts.indexOf(best)]! : ','

  const all: (CsvRow & { error: string | null })[] = []
  let start = 0
  let line = 1
  let counted = 0
  Papa.parse<string[]>(text, {
    delimiter,
    newline: '\n',
    step(result) {
      // the row starts where the previous one ended: count the newlines up to there
      for (; counted < start; counted++) if (text.charCodeAt(counted) === 10) line++
      start = result.meta.cursor
      const cells = result.data
      if (cells.every(c => c.trim() === '')) return
      const e = result.errors[0]
      // text past the sniffed head of the file may still hold a NUL, which no column can store
      const unstorable = cells.some(c => c.includes('\u0000')) ? 'a cell holds the NUL character' : null
      all.push({ line, cells, error: e ? (e.code === 'MissingQuotes' ? 'a quoted field is not closed' : e.message) : unstorable })
    },
  })
  const widths = new Map<number, number>()
  for (const r of all.slice(0, 50)) widths.set(r.cells.length, (widths.get(r.cells.length) ?? 0) + 1)
  const usual = [...widths].sort((a, b) => b[1] - a[1] || b[0] - a[0])[0]?.[0] ?? 0
  const at = Math.max(0, all.findIndex(r => r.cells.length === usual))
  const rows = all.slice(at + 1)
  return {
    delimiter,
    headerLine: all[at]?.line ?? 1,
    header: all[at]?.cells.map(c => c.trim()) ?? [],
    rows: rows.map(({ line, cells }) => ({ line, cells })),
    problems: rows.filter(r => r.error).map(r => ({ line: r.line, message: `Line ${r.line}: ${r.error}` })),
  }
}

async function buildFile(db: Db, buildId: string, id: string): Promise<FileRow> {
  const file = await db('files').where({ id, build_id: buildId }).first()
  if (!file) throw createError({ statusCode: 404, message: 'file: no such file in this build', data: { fields: { file: 'Not found in this build' } } })
  return file
}

const LOOKS_LIKE_INDEX = /^(#|no\.?|n|index|idx|sample|row|id|line)$/i

/** GET /api/builds/:build/import/preview: the header, the first rows, and a guess at the columns. */
export async function previewCsv(db: Db, buildId: string, fileId: string): Promise<CsvPreview> {
  const file = await buildFile(db, buildId, fileId)
  const base = { file: { id: file.id, name: file.name, size: Number(file.size) } }
  let text: string
  try {
    text = await readStoredText(file)
  }
  catch (err) {
    if ((err as { statusCode?: number }).statusCode !== 422) throw err
    return { ...base, delimiter: ',', headerLine: 1, columns: [], rows: [], totalRows: 0, guess: { value: null, unit: null, time: null, revision: null }, problem: (err as Error).message }
  }
  const parsed = parseCsvText(text)
  const sample = parsed.rows.slice(0, PREVIEW_ROWS)
  const column = (test: (name: string, cells: string[]) => boolean) => {
    const i = parsed.header.findIndex((name, at) => test(name, sample.map(r => (r.cells[at] ?? '').trim()).filter(Boolean)))
    return i >= 0 ? parsed.header[i]! : null
  }
  const decimalComma = parsed.delimiter !== ','
  const time = column((n, cells) => /time|date|stamp/i.test(n) && cells.length > 0 && cells.every(c => parseTimeCell(c) !== null))
  const value = column((n, cells) => n !== time && !LOOKS_LIKE_INDEX.test(n) && !/time|date|stamp/i.test(n) && cells.length > 0 && cells.every(c => parseNumberCell(c, decimalComma) !== null))
  return {
    ...base,
    delimiter: parsed.delimiter,
    headerLine: parsed.headerLine,
    columns: parsed.header,
    rows: sample,
    totalRows: parsed.rows.length,
    guess: {
      value,
      time,
      unit: column(n => /^units?$/i.test(n)),
      revision: column(n => /^rev(ision)?$/i.test(n)),
    },
    problem: parsed.header.length === 0 ? 'The file is empty' : null,
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
  const parsed = parseCsvText(await readStoredText(file))
  const plan = planCsvImport(parsed.header, parsed.rows,
    { value: body.valueColumn, unit: body.unitColumn, time: body.timeColumn, revision: body.revisionColumn },
    { revision: body.revision, unit: body.unit, targetUnit: target.unit, decimalComma: parsed.delimiter !== ',' },
    parsed.headerLine)
  const problems = [...parsed.problems, ...plan.problems].sort((a, b) => a.line - b.line)
  let problemCount = parsed.problems.length + plan.problemCount

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
      const resolution = body.resolution ? diffFromSI(diffToSI(body.resolution, resolutionUnit), g.unit) : null
      const created = await insertReading(trx, actor, { buildId: build.id, body: {
        revision: g.revision,
        target: target.key,
        values: g.values,
        unit: g.unit,
        method,
        resolution,
        takenAt: g.takenAt ?? undefined,
        notes: `Imported from ${file.name}, lines ${g.firstLine}–${g.lastLine}`,
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

export const READINGS_CSV_COLUMNS = ['build', 'target', 'revision', 'reading', 'sample', 'value', 'unit', 'value_si', 'si_unit', 'taken_at', 'method']

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
        .select('rd.id', 't.key', 't.quantity', 'rv.label', 'rd.values_entered', 'rd.values_si', 'rd.unit_entered', 'rd.taken_at', 'rd.method') as {
        id: string
        key: string
        quantity: Quantity
        label: string
        values_entered: number[]
        values_si: number[]
        unit_entered: string
        taken_at: Date
        method: string
      }[]
      const byId = new Map(found.map(r => [r.id, r]))
      const lines: unknown[][] = []
      for (const id of batch) {
        const r = byId.get(id)
        if (!r) continue
        const at = new Date(r.taken_at).toISOString()
        r.values_entered.forEach((v, k) => lines.push([build.slug, r.key, r.label, r.id, k + 1, v, r.unit_entered, r.values_si[k], SI_UNIT[r.quantity], at, r.method]))
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
