import type { Db } from '../db'

// The build archive's layout (docs/archive.md), shared by the export (export.ts) and the import
// (import.ts): which tables it carries and in which order, and what the database says about
// their columns and references, read from the catalog so a column added later comes along.

export const ARCHIVE_FORMAT = 'ratchet-build-archive'
export const ARCHIVE_VERSION = 1

/** The tables of one build, parents before children (the order the import inserts them in). */
export const ARCHIVE_TABLES = [
  'builds', 'targets', 'revisions', 'readings', 'cell_stats', 'findings', 'finding_targets', 'fixes',
  'finding_events', 'finding_comments', 'files', 'events',
] as const
export type ArchiveTable = typeof ARCHIVE_TABLES[number]

/** Entry names: the manifest, one JSON per table, the two CSVs, and each evidence file's bytes. */
export const MANIFEST_NAME = 'manifest.json'
export const tableEntry = (t: ArchiveTable) => `tables/${t}.json`
export const FILE_ENTRY = /^files\/([0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12})$/
export const CSV_ENTRIES = ['readings.csv', 'scoreboard.csv'] as const

export interface ManifestEntry { name: string, size: number, sha256: string }
export interface ArchiveManifest {
  format: typeof ARCHIVE_FORMAT
  version: number
  exportedAt: string
  build: { name: string, slug: string }
  /** rows per table, and evidence files */
  counts: Record<string, number>
  /** every other entry of the archive, in the order it follows the manifest */
  files: ManifestEntry[]
}

/** A person where a row names a user: the name and e-mail the user had at export. */
export interface ArchivePerson { name: string, email: string }

export interface ColumnInfo { name: string, type: string, serial: boolean }
export interface ReferenceInfo { column: string, table: string }
export interface TableInfo {
  columns: Map<string, ColumnInfo>
  /** single-column foreign keys: column → the table it points at */
  references: Map<string, string>
}

/** Columns that hold user ids without a foreign key (arrays of them). */
export const USER_ARRAY_COLUMNS: Partial<Record<ArchiveTable, string[]>> = { finding_comments: ['mentions'] }

let schema: Map<string, TableInfo> | undefined

/** Columns and foreign keys of the archived tables, from the database's catalog (read once). */
export async function archiveSchema(db: Db): Promise<Map<string, TableInfo>> {
  if (schema) return schema
  const tables = [...ARCHIVE_TABLES]
  const { rows: cols } = await db.raw(`
    SELECT table_name AS t, column_name AS c, udt_name AS type, coalesce(column_default LIKE 'nextval(%', false) AS serial
    FROM information_schema.columns WHERE table_schema = current_schema() AND table_name = ANY(?)
    ORDER BY table_name, ordinal_position`, [tables]) as { rows: { t: string, c: string, type: string, serial: boolean }[] }
  const { rows: fks } = await db.raw(`
    SELECT c.conrelid::regclass::text AS t, a.attname AS c, c.confrelid::regclass::text AS ref
    FROM pg_constraint c JOIN pg_attribute a ON a.attrelid = c.conrelid AND a.attnum = c.conkey[1]
    WHERE c.contype = 'f' AND cardinality(c.conkey) = 1 AND c.conrelid::regclass::text = ANY(?)`, [tables]) as { rows: { t: string, c: string, ref: string }[] }
  const out = new Map<string, TableInfo>()
  for (const t of tables) out.set(t, { columns: new Map(), references: new Map() })
  for (const c of cols) out.get(c.t)!.columns.set(c.c, { name: c.c, type: c.type, serial: c.serial })
  for (const f of fks) out.get(f.t)!.references.set(f.c, f.ref.replace(/^"|"$/g, ''))
  schema = out
  return out
}
