import { testDb } from './api'

// A fingerprint of every application table, for checking that refused requests changed no row.
// Most tables are fingerprinted by their row count and the sum of their rows' xmin (the id of
// the transaction that wrote each row version: an insert or update gives a row a new one, a
// delete lowers the count), which reads no row contents and stays fast on large tables. Tables
// that accepted requests and background work touch in columns of their own bookkeeping are
// fingerprinted by content instead, without those columns.

/** columns that change without a change of data: a rig token's last use, queue bookkeeping */
const BOOKKEEPING: Record<string, string[]> = {
  rig_tokens: ['last_used_at', 'last_used_ip'],
  events: ['fanned_out_at'],
  mention_notices: ['sent_at'],
}
/**
 * Failed sign-ins are recorded on purpose (the throttle counts them); they are not data. The
 * e-mail queue's worker writes deliveries and (for a periodic digest) a member's subscription row
 * in the background at any moment, whatever the request under test did; the digest tests check
 * those tables themselves. The data stamps move with any change to the tables checked here, and
 * with the worker's new subscription rows: they say nothing these fingerprints don't (the kept
 * answers' tests check them).
 */
const SKIPPED = new Set(['login_failures', 'knex_migrations', 'knex_migrations_lock', 'deliveries', 'subscriptions', 'data_stamps'])

let tables: string[] | undefined

export type DbFingerprint = Record<string, string>

/** The app's tables, each with its fingerprint. */
export async function dbFingerprint(): Promise<DbFingerprint> {
  const db = testDb()
  tables ??= ((await db('information_schema.tables').where({ table_schema: 'public', table_type: 'BASE TABLE' }).pluck('table_name')) as string[])
    .filter(t => !SKIPPED.has(t)).sort()
  const parts = tables.map((t) => {
    const name = db.raw('??', [t]).toQuery()
    if (BOOKKEEPING[t]) {
      const drop = `ARRAY[${BOOKKEEPING[t].map(c => `'${c}'`).join(',')}]`
      return `SELECT '${t}' AS t, count(*)::text || ':' || coalesce(md5(string_agg(md5((to_jsonb(x) - ${drop}::text[])::text), '' ORDER BY md5((to_jsonb(x) - ${drop}::text[])::text))), '') AS f FROM ${name} x`
    }
    return `SELECT '${t}' AS t, count(*)::text || ':' || coalesce(sum(xmin::text::bigint), 0)::text AS f FROM ${name}`
  })
  const { rows } = await db.raw(parts.join(' UNION ALL ')) as { rows: { t: string, f: string }[] }
  return Object.fromEntries(rows.map(r => [r.t, r.f]))
}

/** The tables whose fingerprints differ. */
export function changedTables(before: DbFingerprint, after: DbFingerprint): string[] {
  return Object.keys({ ...before, ...after }).filter(t => before[t] !== after[t]).sort()
}
