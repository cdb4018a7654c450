import Papa from 'papaparse'
import type { CsvPreview } from '#shared/types/files'
import { parseNumberCell, parseTimeCell, planCsvImport, type CsvColumns, type CsvDefaults, type CsvPlan, type CsvProblem, type CsvRow } from '#shared/utils/csvReadings'

// The CPU-bound half of the CSV import: decoding, parsing and checking a file's bytes. Pure (no
// database, no request), so that it runs in a worker thread (server/workers/csv.ts) and the
// event loop stays free for other requests while a large file is read.

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
export function decodeCsvBytes(bytes: Uint8Array): string {
  const body = bytes[0] === 0xEF && bytes[1] === 0xBB && bytes[2] === 0xBF ? bytes.subarray(3) : bytes
  try {
    return new TextDecoder('utf-8', { fatal: true }).decode(body)
  }
  catch {
    return Buffer.from(body.buffer, body.byteOffset, body.byteLength).toString('latin1')
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

const LOOKS_LIKE_INDEX = /^(#|no\.?|n|index|idx|sample|row|id|line)$/i
const LOOKS_LIKE_U = /^(u|std_?unc(ertainty)?|standard[ _]uncertainty|uncertainty)$/i
const LOOKS_LIKE_DOF = /^(dof|df|nu|ν|degrees[ _]of[ _]freedom)$/i

export type CsvPreviewParsed = Omit<CsvPreview, 'file'>

/** The header, the first rows, and a guess at the columns. */
export function previewCsvBytes(bytes: Uint8Array): CsvPreviewParsed {
  const parsed = parseCsvText(decodeCsvBytes(bytes))
  const sample = parsed.rows.slice(0, PREVIEW_ROWS)
  const column = (test: (name: string, cells: string[]) => boolean) => {
    const i = parsed.header.findIndex((name, at) => test(name, sample.map(r => (r.cells[at] ?? '').trim()).filter(Boolean)))
    return i >= 0 ? parsed.header[i]! : null
  }
  const decimalComma = parsed.delimiter !== ','
  const time = column((n, cells) => /time|date|stamp/i.test(n) && cells.length > 0 && cells.every(c => parseTimeCell(c) !== null))
  const u = column(n => LOOKS_LIKE_U.test(n))
  const dof = column(n => LOOKS_LIKE_DOF.test(n))
  const value = column((n, cells) => n !== time && n !== u && n !== dof && !LOOKS_LIKE_INDEX.test(n) && !/time|date|stamp/i.test(n) && cells.length > 0 && cells.every(c => parseNumberCell(c, decimalComma) !== null))
  return {
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
      u,
      dof,
    },
    problem: parsed.header.length === 0 ? 'The file is empty' : null,
  }
}

export interface CsvPlanned {
  plan: CsvPlan
  /** the file's own problems (cells) and the plan's, in line order */
  problems: CsvProblem[]
  problemCount: number
}

/** Every row checked and grouped into readings (one per revision and unit). */
export function planCsvBytes(bytes: Uint8Array, columns: CsvColumns, defaults: Omit<CsvDefaults, 'decimalComma'>): CsvPlanned {
  const parsed = parseCsvText(decodeCsvBytes(bytes))
  const plan = planCsvImport(parsed.header, parsed.rows, columns, { ...defaults, decimalComma: parsed.delimiter !== ',' }, parsed.headerLine)
  return {
    plan,
    problems: [...parsed.problems, ...plan.problems].sort((a, b) => a.line - b.line),
    problemCount: parsed.problems.length + plan.problemCount,
  }
}

export type CsvJob
  = | { kind: 'preview', bytes: Uint8Array }
    | { kind: 'plan', bytes: Uint8Array, columns: CsvColumns, defaults: Omit<CsvDefaults, 'decimalComma'> }

export function runCsvJob(job: CsvJob): CsvPreviewParsed | CsvPlanned {
  return job.kind === 'preview' ? previewCsvBytes(job.bytes) : planCsvBytes(job.bytes, job.columns, job.defaults)
}
