import { randomUUID } from 'node:crypto'
import type { Knex } from 'knex'
import type pg from 'pg'
import type { Db } from './db'

// Named prepared statements for the hottest queries (a move on the board). PostgreSQL parses a
// named statement once per connection and, after a few runs, keeps its plan; an unnamed one, as
// Knex sends every query, is parsed and planned on each call, which costs more than running these
// small index look-ups. Knex's query events are emitted too, so Server-Timing counts them.

const names = new Map<string, string>()

/** The statement's name: one per distinct text, the same in every connection of this process. */
function nameOf(text: string) {
  let name = names.get(text)
  if (!name) {
    name = `ratchet_${names.size + 1}`
    names.set(text, name)
  }
  return name
}

/**
 * Runs `text` (placeholders `$1`, `$2` …) as a named prepared statement on `db`'s connection:
 * the pool's, or the transaction's when `db` is one.
 */
export async function prepared<R>(db: Db, text: string, values: unknown[]): Promise<R[]> {
  const client = db.client as Knex.Client & { acquireConnection(): Promise<pg.PoolClient>, releaseConnection(c: pg.PoolClient): Promise<void> }
  const query = { __knexQueryUid: randomUUID(), sql: text, bindings: values, method: 'raw' }
  const connection = await client.acquireConnection()
  try {
    client.emit('query', query)
    const result = await connection.query({ name: nameOf(text), text, values }) as pg.QueryResult<R & pg.QueryResultRow>
    client.emit('query-response', result, query)
    return result.rows
  }
  catch (error) {
    client.emit('query-error', error, query)
    throw error
  }
  finally {
    await client.releaseConnection(connection)
  }
}

/**
 * Runs several read-only queries in one round trip: their SQL, bindings inlined by Knex's own
 * quoting, goes to the server as one simple-protocol message, and each query's rows come back in
 * order, parsed by the same type parsers. For the reads a page runs side by side, where the round
 * trips, not the statements, were the cost (`npm run bench -- load`). Values are quoted by Knex,
 * never pasted into the text.
 */
export async function batch<T extends unknown[]>(db: Db, queries: { [K in keyof T]: Knex.QueryBuilder | Knex.Raw }): Promise<{ [K in keyof T]: T[K][] }> {
  const client = db.client as Knex.Client & { acquireConnection(): Promise<pg.PoolClient>, releaseConnection(c: pg.PoolClient): Promise<void> }
  const text = (queries as (Knex.QueryBuilder | Knex.Raw)[]).map(q => q.toQuery()).join(';\n')
  const query = { __knexQueryUid: randomUUID(), sql: text, bindings: [], method: 'raw' }
  const connection = await client.acquireConnection()
  try {
    client.emit('query', query)
    const result = await connection.query(text) as unknown as pg.QueryResult | pg.QueryResult[]
    client.emit('query-response', result, query)
    const results = Array.isArray(result) ? result : [result]
    return results.map(r => r.rows) as { [K in keyof T]: T[K][] }
  }
  catch (error) {
    client.emit('query-error', error, query)
    throw error
  }
  finally {
    await client.releaseConnection(connection)
  }
}
