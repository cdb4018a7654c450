import { MAX_SAMPLES } from './readingStats'
import { UnitError, assertSameQuantity } from './units'

// Turning an instrument's CSV into readings: every row is checked, and every problem names its
// line (1-based, the header being line 1 when it is the first line of the file). Rows are grouped
// by revision and unit; each group becomes one reading. A row with a standard uncertainty (the
// optional u column) is a stated result instead: one reading of its own, value ± u, with the
// degrees of freedom of the optional dof column (blank: infinite). No I/O: the server parses the
// file (papaparse) and writes the readings in one transaction.

export interface CsvRow {
  /** the line the row starts on */
  line: number
  cells: string[]
}

export interface CsvColumns {
  /** header names */
  value: string
  unit?: string | null
  time?: string | null
  revision?: string | null
  /** a stated result's standard uncertainty (in the row's unit); rows with a blank cell are samples */
  u?: string | null
  /** a stated result's degrees of freedom; blank: infinite */
  dof?: string | null
}

export interface CsvDefaults {
  /** the revision for rows without a revision column (or a blank cell in it) */
  revision?: string | null
  /** the unit for rows without a unit column (or a blank cell in it) */
  unit?: string | null
  /** the target's display unit: every unit must measure the same quantity */
  targetUnit: string
  /** "12,5" is a number when the file's delimiter is not a comma */
  decimalComma?: boolean
}

export interface CsvProblem {
  line: number
  message: string
}

export interface CsvGroup {
  revision: string
  /** canonical spelling */
  unit: string
  values: number[]
  /** the earliest time of the group's rows (ISO), when there is a time column */
  takenAt: string | null
  firstLine: number
  lastLine: number
  /** a stated result (one row: values = [value]); absent for a group of samples */
  stated?: { u: number, dof: number | null }
}

export interface CsvPlan {
  groups: CsvGroup[]
  /** rows read (blank lines are skipped) */
  rows: number
  problems: CsvProblem[]
  /** how many problems there were in all (`problems` keeps the first few) */
  problemCount: number
}

export const MAX_PROBLEMS = 20

/** Stated results one file may hold: each is a reading of its own, and every reading re-pools its cell. */
export const MAX_STATED_ROWS = 1000

const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/
const COMMA_NUMBER = /^[+-]?\d+,\d+([eE][+-]?\d+)?$/

/** A cell as a finite number, or null. Thousands separators are refused, not guessed. */
export function parseNumberCell(cell: string, decimalComma = false): number | null {
  let s = cell.trim()
  if (decimalComma && COMMA_NUMBER.test(s)) s = s.replace(',', '.')
  if (!NUMBER.test(s)) return null
  const x = Number(s)
  return Number.isFinite(x) ? x : null
}

const ISO_TIME = /^(\d{4}-\d{2}-\d{2})(?:[T ](\d{2}:\d{2}(?::\d{2}(?:\.\d{1,9})?)?))?\s*(Z|[+-]\d{2}:?\d{2})?$/i

/**
 * An ISO 8601 date or date-time ("2026-03-14T10:30:00+01:00", "2026-03-14 10:30", "2026-03-14");
 * without a zone it is read as UTC. Returns an ISO string, or null.
 */
export function parseTimeCell(cell: string): string | null {
  const m = ISO_TIME.exec(cell.trim())
  if (!m) return null
  const [, date, time, zone] = m
  const [y, mo, d] = date!.split('-').map(Number)
  if (mo! < 1 || mo! > 12 || d! < 1 || d! > 31) return null
  const clock = time ? (time.length === 5 ? `${time}:00` : time) : '00:00:00'
  const [hh, mm, ss] = clock.split(':').map(Number)
  if (hh! > 23 || mm! > 59 || ss! >= 61) return null
  const z = !zone || zone.toUpperCase() === 'Z' ? 'Z' : zone.length === 5 ? `${zone.slice(0, 3)}:${zone.slice(3)}` : zone
  const t = Date.parse(`${date}T${clock}${z}`)
  if (Number.isNaN(t)) return null
  // Date.parse rolls 2026-02-31 over into March: refuse dates that don't exist
  const check = new Date(Date.UTC(y!, mo! - 1, d!))
  if (check.getUTCMonth() !== mo! - 1) return null
  return new Date(t).toISOString()
}

const quote = (s: string) => `"${s.length > 40 ? `${s.slice(0, 40)}…` : s}"`

/** Where each named column is; problems for names the header lacks or holds twice. */
export function locateColumns(header: string[], columns: CsvColumns, headerLine = 1): { index: Record<keyof CsvColumns, number | null>, problems: CsvProblem[] } {
  const problems: CsvProblem[] = []
  const names = header.map(h => h.trim())
  const find = (role: string, name: string | null | undefined): number | null => {
    if (name == null || name === '') return null
    const at = names.flatMap((n, i) => (n === name.trim() ? [i] : []))
    if (at.length === 0) problems.push({ line: headerLine, message: `The header has no column ${quote(name)} (the ${role} column)` })
    else if (at.length > 1) problems.push({ line: headerLine, message: `The header names ${quote(name)} ${at.length} times; rename the columns so the ${role} column is unique` })
    return at.length === 1 ? at[0]! : null
  }
  return {
    index: {
      value: find('value', columns.value),
      unit: find('unit', columns.unit),
      time: find('time', columns.time),
      revision: find('revision', columns.revision),
      u: find('standard uncertainty', columns.u),
      dof: find('degrees of freedom', columns.dof),
    },
    problems,
  }
}

/**
 * Checks every row and groups the values into readings (one per revision and unit, in the
 * order they first appear). With any problem, `groups` is empty: an import is all or nothing.
 */
export function planCsvImport(header: string[], rows: CsvRow[], columns: CsvColumns, defaults: CsvDefaults, headerLine = 1): CsvPlan {
  const problems: CsvProblem[] = []
  let problemCount = 0
  const problem = (line: number, message: string) => {
    problemCount++
    if (problems.length < MAX_PROBLEMS) problems.push({ line, message })
  }
  const { index, problems: headerProblems } = locateColumns(header, columns, headerLine)
  for (const p of headerProblems) problem(p.line, p.message)
  if (index.revision === null && !defaults.revision?.trim()) problem(headerLine, 'Choose the revision, or a column that names it')
  if (index.unit === null && !defaults.unit?.trim()) problem(headerLine, 'Choose the unit the values are in, or a column that names it')
  if (columns.dof && !columns.u) problem(headerLine, 'A degrees-of-freedom column goes with a standard uncertainty (u) column')
  // a default unit must fit the target even when every row names its own
  const unitCache = new Map<string, string | UnitError>()
  const unitOf = (text: string): string | UnitError => {
    if (!unitCache.has(text)) {
      try {
        unitCache.set(text, assertSameQuantity(text, defaults.targetUnit).entered.unit)
      }
      catch (e) {
        if (!(e instanceof UnitError)) throw e
        unitCache.set(text, e)
      }
    }
    return unitCache.get(text)!
  }
  const defaultUnit = defaults.unit?.trim() ? unitOf(defaults.unit.trim()) : null
  if (defaultUnit instanceof UnitError) problem(headerLine, `Unit: ${defaultUnit.message}`)
  if (problemCount > 0 || index.value === null) return { groups: [], rows: rows.length, problems, problemCount }

  const groups = new Map<string, CsvGroup>()
  let statedRows = 0
  const cell = (r: CsvRow, i: number | null) => (i === null ? '' : (r.cells[i] ?? '').trim())
  for (const r of rows) {
    const raw = cell(r, index.value)
    const value = parseNumberCell(raw, defaults.decimalComma)
    if (raw === '') problem(r.line, `Line ${r.line}: no value in column ${quote(columns.value)}`)
    else if (value === null) {
      const hint = /^\d{1,3}(,\d{3})+(\.\d+)?$/.test(raw) ? ' (remove the thousands separators)' : /^-?\d+,\d+$/.test(raw) ? ' (use a dot as the decimal separator)' : ''
      problem(r.line, `Line ${r.line}: ${quote(raw)} in column ${quote(columns.value)} is not a number${hint}`)
    }

    let unit: string | null = null
    const unitText = cell(r, index.unit)
    if (unitText) {
      const u = unitOf(unitText)
      if (u instanceof UnitError) problem(r.line, `Line ${r.line}: unit ${u.code === 'unknown' ? `${quote(unitText)} is not a unit Ratchet knows` : u.message}`)
      else unit = u
    }
    else if (typeof defaultUnit === 'string') unit = defaultUnit
    else problem(r.line, `Line ${r.line}: no unit in column ${quote(columns.unit ?? '')}, and no unit chosen for blank cells`)

    const revision = cell(r, index.revision) || defaults.revision?.trim() || ''
    if (!revision) problem(r.line, `Line ${r.line}: no revision in column ${quote(columns.revision ?? '')}, and no revision chosen for blank cells`)

    let takenAt: string | null = null
    if (index.time !== null) {
      const timeText = cell(r, index.time)
      takenAt = parseTimeCell(timeText)
      if (timeText === '') problem(r.line, `Line ${r.line}: no time in column ${quote(columns.time ?? '')}`)
      else if (takenAt === null) problem(r.line, `Line ${r.line}: ${quote(timeText)} in column ${quote(columns.time ?? '')} is not a date and time (use ISO 8601, e.g. 2026-03-14T10:30:00Z)`)
    }

    // a stated result: the row's own u (≥ 0) and, optionally, its degrees of freedom (> 0)
    let stated: CsvGroup['stated']
    let statedBad = false
    const uText = cell(r, index.u)
    const dofText = cell(r, index.dof)
    if (uText !== '') {
      const u = parseNumberCell(uText, defaults.decimalComma)
      let dof: number | null = null
      if (u === null || u < 0) {
        problem(r.line, `Line ${r.line}: ${quote(uText)} in column ${quote(columns.u ?? '')} is not a standard uncertainty (a number ≥ 0)`)
        statedBad = true
      }
      if (dofText !== '') {
        dof = parseNumberCell(dofText, defaults.decimalComma)
        if (dof === null || dof <= 0) {
          problem(r.line, `Line ${r.line}: ${quote(dofText)} in column ${quote(columns.dof ?? '')} is not a number of degrees of freedom (a number > 0; leave it blank for infinite)`)
          statedBad = true
        }
      }
      if (!statedBad) stated = { u: u!, dof }
    }
    else if (dofText !== '') {
      problem(r.line, `Line ${r.line}: degrees of freedom without a standard uncertainty in column ${quote(columns.u ?? '')}`)
      statedBad = true
    }

    if (value === null || unit === null || !revision || (index.time !== null && takenAt === null) || statedBad) continue
    if (stated) {
      if (++statedRows > MAX_STATED_ROWS) {
        problem(r.line, `Line ${r.line}: a file holds at most ${MAX_STATED_ROWS.toLocaleString('en')} stated results (rows with a u); split the file`)
        continue
      }
      // each stated result is a reading of its own
      groups.set(`line\u0000${r.line}`, { revision, unit, values: [value], takenAt, firstLine: r.line, lastLine: r.line, stated })
      continue
    }
    const key = `${revision.toLowerCase()}\u0000${unit}`
    let g = groups.get(key)
    if (!g) {
      g = { revision, unit, values: [], takenAt: null, firstLine: r.line, lastLine: r.line }
      groups.set(key, g)
    }
    if (g.values.length === MAX_SAMPLES) {
      problem(r.line, `Line ${r.line}: revision ${revision} already has ${MAX_SAMPLES.toLocaleString('en')} values in ${unit} from this file; a reading holds at most ${MAX_SAMPLES.toLocaleString('en')}`)
      continue
    }
    g.values.push(value)
    g.lastLine = r.line
    if (takenAt && (g.takenAt === null || takenAt < g.takenAt)) g.takenAt = takenAt
  }
  if (rows.length === 0) problem(headerLine, 'The file has a header but no rows')
  return { groups: problemCount ? [] : [...groups.values()], rows: rows.length, problems, problemCount }
}

/** "Line 5: …" or "Line 5: … (and 3 more problems)". */
export function problemsMessage(problems: CsvProblem[], count: number): string {
  const first = problems[0]?.message ?? 'The file could not be read'
  return count > 1 ? `${first} (and ${count - 1} more ${count === 2 ? 'problem' : 'problems'})` : first
}
