import knex, { type Knex } from 'knex'
import pg from 'pg'
import type {} from '../db/tables'

// DOUBLE PRECISION comes back as a JS number, BIGINT counts (e.g. count(*)) too.
pg.types.setTypeParser(pg.types.builtins.INT8, v => Number(v))
pg.types.setTypeParser(pg.types.builtins.NUMERIC, v => Number(v))

/**
 * A connection for a domain function: the pool, or a transaction the caller opened. Tables are
 * typed once in server/db/tables.ts, so `db('readings')` knows its columns.
 */
export type Db = Knex | Knex.Transaction

/** The one row a statement returned (an INSERT … RETURNING of one row, say). */
export function theRow<T>(rows: readonly T[]): T {
  const row = rows[0]
  if (row === undefined) throw new Error('The statement returned no row')
  return row
}

let instance: Knex | undefined

/** The one Knex instance of this server process. */
export function useDb(): Knex {
  if (!instance) {
    const config = useRuntimeConfig()
    const url = config.databaseUrl || process.env.DATABASE_URL
    if (!url) throw createError({ statusCode: 503, message: 'The database is not configured (DATABASE_URL).' })
    instance = knex({
      client: 'pg',
      connection: { connectionString: url, connectionTimeoutMillis: 3000 },
      pool: { min: 0, max: 10, acquireTimeoutMillis: 5000 },
    })
  }
  return instance
}
