// Response shapes of the evidence file and CSV routes.

import type { FileKind } from '../utils/contentTypes'
import type { CsvProblem } from '../utils/csvReadings'
import type { ReadingCreated } from './api'

/** POST /api/v1/builds/:build/files */
export interface FileCreated {
  id: string
  name: string
  size: number
  sha256: string
  contentType: string
}

export interface FileView extends FileCreated {
  kind: FileKind
  /** opened in the browser rather than downloaded */
  inline: boolean
  /** the bytes: GET /api/v1/files/:id */
  url: string
  createdAt: string
  /** a person's name, or "rig token …" */
  uploadedBy: string | null
  revision: string | null
  reading: { id: string, target: string, targetName: string, revision: string } | null
  finding: { id: string, title: string } | null
  /** the caller may delete it (its uploader or an Owner) */
  canDelete: boolean
}

/** GET /api/v1/builds/:build/files */
export interface FileList {
  items: FileView[]
  total: number
  page: number
  perPage: number
}

/** GET /api/teams/:team/storage */
export interface StorageUsage {
  team: { id: string, slug: string, name: string }
  usedBytes: number
  /** null: no quota */
  quotaBytes: number | null
  files: number
  maxFileBytes: number
  builds: { slug: string, name: string, usedBytes: number, files: number }[]
}

/** GET /api/v1/builds/:build/import/preview */
export interface CsvPreview {
  file: { id: string, name: string, size: number }
  delimiter: string
  /** the header's line in the file (1 unless blank lines come first) */
  headerLine: number
  columns: string[]
  /** the first rows, as text */
  rows: { line: number, cells: string[] }[]
  /** rows in the whole file, when it could be counted */
  totalRows: number
  /** columns that look like values, units and times */
  guess: { value: string | null, unit: string | null, time: string | null, revision: string | null, u: string | null, dof: string | null }
  /** set when the file can't be imported as it is (too large, not text) */
  problem: string | null
}

/** POST /api/v1/builds/:build/import */
export interface CsvImported {
  file: { id: string, name: string }
  rows: number
  readings: (ReadingCreated & { revision: string, unitEntered: string, n: number, firstLine: number, lastLine: number })[]
}

/** the `data` of a 422 from the import */
export interface CsvImportProblems {
  problems: CsvProblem[]
  problemCount: number
}
