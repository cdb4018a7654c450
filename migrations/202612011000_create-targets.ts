import type { Knex } from 'knex'

// Quantities and comparators as shared/utils/units.ts and conformance.ts name them.
const QUANTITIES = [
  'velocity', 'mass', 'force', 'torque', 'current', 'voltage', 'power', 'energy', 'charge', 'angularSpeed',
  'length', 'time', 'angle', 'frequency', 'temperature', 'pressure', 'acceleration', 'dimensionless',
]

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('targets', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'))
    t.uuid('build_id').notNullable().references('builds.id').onDelete('CASCADE')
    t.string('key', 60).notNullable()
    t.string('name', 120).notNullable()
    // the display unit in its canonical spelling; every number below is in SI
    t.string('unit', 30).notNullable()
    t.string('quantity', 20).notNullable()
    t.string('comparator', 10).notNullable()
    t.double('threshold').notNullable()
    t.double('threshold_high')
    t.double('stretch')
    t.double('noise_band')
    t.text('notes').notNullable().defaultTo('')
    t.integer('position').notNullable().defaultTo(0)
    t.timestamp('archived_at', { useTz: true })
    t.uuid('created_by').references('users.id').onDelete('SET NULL')
    t.timestamps(true, true)
    t.unique(['build_id', 'key'])
    t.index(['build_id', 'position'])
  })
  await knex.raw(`ALTER TABLE targets ADD CONSTRAINT targets_quantity_check CHECK (quantity IN (${QUANTITIES.map(q => `'${q}'`).join(', ')}))`)
  await knex.raw(`ALTER TABLE targets ADD CONSTRAINT targets_comparator_check CHECK (comparator IN ('atLeast', 'atMost', 'between'))`)
  await knex.raw(`ALTER TABLE targets ADD CONSTRAINT targets_band_check CHECK (comparator <> 'between' OR (threshold_high IS NOT NULL AND threshold_high >= threshold))`)
  await knex.raw(`ALTER TABLE targets ADD CONSTRAINT targets_noise_band_check CHECK (noise_band IS NULL OR noise_band >= 0)`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('targets')
}
