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

  it('stored design parameters {name, value, unit} take keys from their names, and lose them again going down', async () => {
    await db.migrate.latest()
    // back to before the typed parameters (and whatever came after them)
    while (await db.migrate.currentVersion() >= '202612030200') await db.migrate.down()
    const [team] = await db('teams').insert({ name: 'Migration team', slug: 'migration-team' }).returning('id') as { id: string }[]
    const [build] = await db('builds').insert({ team_id: team!.id, name: 'Migration build', slug: 'migration-build' }).returning('id') as { id: string }[]
    const old = [
      { name: 'Wheel radius (front)', value: 50, unit: 'mm' },
      { name: 'Gear ratio', value: 1.4, unit: null },
      { name: 'Gear ratio', value: 2, unit: null },
      { name: 'pi', value: 3, unit: null },
      { name: 'Carrier', value: 'S235 steel', unit: null },
    ]
    const [rev] = await db('revisions').insert({ build_id: build!.id, label: 'R1', seq: 1, parameters: JSON.stringify(old) }).returning('id') as { id: string }[]
    await db.migrate.up()
    const up = (await db('revisions').where({ id: rev!.id }).first())!.parameters
    expect(up).toEqual([
      { key: 'wheel_radius_front', name: 'Wheel radius (front)', value: 50, unit: 'mm', tolerance: null },
      { key: 'gear_ratio', name: 'Gear ratio', value: 1.4, unit: null, tolerance: null },
      { key: 'gear_ratio_2', name: 'Gear ratio', value: 2, unit: null, tolerance: null },
      { key: 'pi_param', name: 'pi', value: 3, unit: null, tolerance: null },
      { key: 'carrier', name: 'Carrier', value: 'S235 steel', unit: null, tolerance: null },
    ])
    await db.migrate.down()
    expect((await db('revisions').where({ id: rev!.id }).first())!.parameters).toEqual(old)
    await db('teams').where({ id: team!.id }).delete()
    await db.migrate.latest()
  })
})
