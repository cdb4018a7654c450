import type { Knex } from 'knex'
import type { FileStore, StoredObject } from './storage'

// The sweep (scripts/sweep-files.ts, from cron): stored bytes that no row refers to.

export interface SweepResult {
  /** stored objects looked at */
  scanned: number
  /** removed: no row, and older than the grace period */
  removed: string[]
  /** left alone for now: younger than the grace period (an upload may be writing its row) */
  young: number
}

/**
 * Removes stored bytes that have no row in `files` and were last changed before the grace
 * period (a crash between storing the bytes and writing the row, or a build deleted with its
 * rows). An upload in progress keeps touching its bytes, so it is never older than the grace.
 */
export async function sweepOrphans(db: Knex, store: FileStore, opts: { graceMs: number, now?: Date, dryRun?: boolean }): Promise<SweepResult> {
  const cutoff = (opts.now ?? new Date()).getTime() - opts.graceMs
  const result: SweepResult = { scanned: 0, removed: [], young: 0 }
  let batch: StoredObject[] = []
  const flush = async () => {
    const known = new Set(await db('files').whereIn('storage_key', batch.map(o => o.key)).pluck('storage_key'))
    for (const o of batch) {
      if (known.has(o.key)) continue
      if (!opts.dryRun) await store.remove(o.key)
      result.removed.push(o.key)
    }
    batch = []
  }
  for await (const o of store.list()) {
    result.scanned++
    if (o.modifiedAt.getTime() > cutoff) {
      result.young++
      continue
    }
    batch.push(o)
    if (batch.length >= 500) await flush()
  }
  if (batch.length) await flush()
  return result
}
