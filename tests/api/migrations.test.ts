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

  it('stated readings: existing readings and cells come through unchanged; a rollback refuses to drop stated ones', async () => {
    await db.migrate.latest()
    // back to the schema before stated readings (and whatever came after them), with a samples reading and its cell in it
    const undone: string[] = []
    while (await db.migrate.currentVersion() >= '202612030100') undone.push(...(await db.migrate.down())[1] as string[])
    expect(undone.at(-1)).toBe('202612030100_add-stated-readings.ts')
    const team = (await db('teams').insert({ name: 'Migration team', slug: `migration-${Date.now()}` }).returning('id'))[0]!
    const build = (await db('builds').insert({ team_id: team.id, name: 'Migration build', slug: `migration-build-${Date.now()}` }).returning('id'))[0]!
    const target = (await db('targets').insert({ build_id: build.id, key: 'thrust', name: 'Thrust', unit: 'N', quantity: 'force', comparator: 'atLeast', threshold: 10 }).returning('id'))[0]!
    const revision = (await db('revisions').insert({ build_id: build.id, label: 'R1', seq: 1 }).returning('id'))[0]!
    const reading = (await db('readings').insert({
      target_id: target.id, revision_id: revision.id, values_si: [11, 12, 13], values_entered: [11, 12, 13], unit_entered: 'N',
      n: 3, mean: 12, sd: 1, u_a: 1 / Math.sqrt(3), u: 1 / Math.sqrt(3), nu_eff: 2, ci_low: 9.5, ci_high: 14.5,
    }).returning('id'))[0]!
    await db('cell_stats').insert({ target_id: target.id, revision_id: revision.id, build_id: build.id, readings: 1, n: 3, mean: 12, sd: 1, u: 1 / Math.sqrt(3), nu_eff: 2, ci_low: 9.5, ci_high: 14.5, status: 'marginal' })
    const before = {
      reading: await db('readings').where({ id: reading.id }).first(),
      cell: await db('cell_stats').where({ target_id: target.id }).first(),
    }

    await db.migrate.up()
    const after = {
      reading: await db('readings').where({ id: reading.id }).first(),
      cell: await db('cell_stats').where({ target_id: target.id }).first(),
    }
    // the same row, with null in the new columns (a samples reading) and no stated result in the cell
    expect(after.reading).toEqual({ ...before.reading, stated_u_si: null, stated_u_entered: null, stated_dof: null })
    expect(after.cell).toEqual({ ...before.cell, stated: 0 })

    // the schema keeps a stated reading to one value, u ≥ 0 and ν > 0
    const stated = { target_id: target.id, revision_id: revision.id, values_si: [12.2], values_entered: [12.2], unit_entered: 'N', n: 1, mean: 12.2, u: 0.1, nu_eff: 4, stated_u_si: 0.1, stated_u_entered: 0.1, stated_dof: 4 }
    await expect(db('readings').insert({ ...stated, values_si: [1, 2], values_entered: [1, 2], n: 2 })).rejects.toThrow(/readings_stated_check/)
    await expect(db('readings').insert({ ...stated, stated_u_si: -0.1 })).rejects.toThrow(/readings_stated_check/)
    await expect(db('readings').insert({ ...stated, stated_dof: 0 })).rejects.toThrow(/readings_stated_check/)
    const kept = (await db('readings').insert(stated).returning('id'))[0]!
    await expect(db.migrate.down()).rejects.toThrow(/stated results .* delete them before rolling this migration back/)
    expect(await db('readings').where({ id: kept.id }).first()).toBeTruthy()
    await db('readings').where({ id: kept.id }).delete()
    await db.migrate.down()
    expect(await db('readings').where({ id: reading.id }).first()).toEqual(before.reading)
    await db.migrate.latest()
    await db('teams').where({ id: team.id }).delete()
  })
})
