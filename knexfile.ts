import type { Knex } from 'knex'

// One place for the connection settings of the CLI scripts (migrate, seed, bench).
// The running app reads the same variable through server/utils/db.ts.
export function databaseUrl(): string {
  const url = process.env.DATABASE_URL || process.env.NUXT_DATABASE_URL
  if (!url) throw new Error('DATABASE_URL is not set (scripts/db.sh url prints the local one)')
  return url
}

export function knexConfig(url = databaseUrl()): Knex.Config {
  return {
    client: 'pg',
    connection: url,
    pool: { min: 0, max: 10 },
    migrations: {
      directory: './migrations',
      extension: 'ts',
      loadExtensions: ['.ts'],
      tableName: 'knex_migrations',
    },
    seeds: {
      directory: './seeds',
      loadExtensions: ['.ts'],
    },
  }
}

export default knexConfig
