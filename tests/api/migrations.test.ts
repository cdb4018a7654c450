import { readdirSync } from 'node:fs'
import knex, { type Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { knexConfig } from '../../knexfile'
import { ROOT, SCRATCH_DATABASE_URL } from '../support/env'

async function tables(db: Knex): Promise<string[]> {
  const rows = await db('information_schema.tables')
    .where({ table_schema: 'public' })
    .whereNot('table_name', 'like', 'knex_%')
    .pluck('table_name')
  return (rows as string[]).sort()
}

describe('migrations on a scratch database', () => {
  let db: Knex
  beforeAll(() => {
    const config = knexConfig(SCRATCH_DATABASE_URL)
    // knex's own loader can't import .ts here; hand it the files through the test runner's import
    const files = readdirSync(`${ROOT}migrations`).filter(f => f.endsWith('.ts')).sort()
    db = knex({
      ...config,
      migrations: {
        tableName: 'knex_migrations',
        migrationSource: {
          getMigrations: async () => files,
          getMigrationName: (f: string) => f,
          getMigration: (f: string) => import(`../../migrations/${f.replace(/\.ts$/, '')}.ts`),
        },
      },
    })
  })
  afterAll(async () => { await db.destroy() })

  it('go up, all the way down, and up again', async () => {
    await db.migrate.latest()
    const first = await tables(db)
    expect(first).toContain('users')
    expect(first).toContain('audit_log')

    const [, rolledBack] = await db.migrate.rollback(undefined, true)
    expect(rolledBack.length).toBeGreaterThan(0)
    expect(await tables(db)).toEqual([])

    await db.migrate.latest()
    expect(await tables(db)).toEqual(first)
    const [, pending] = await db.migrate.list()
    expect(pending).toEqual([])
  })
})
