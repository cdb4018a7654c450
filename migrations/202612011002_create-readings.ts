import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('readings', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'))
    t.uuid('target_id').notNullable().references('targets.id').onDelete('CASCADE')
    t.uuid('revision_id').notNullable().references('revisions.id').onDelete('CASCADE')
    // the samples in SI, and as entered (in unit_entered)
    t.specificType('values_si', 'double precision[]').notNullable()
    t.specificType('values_entered', 'double precision[]').notNullable()
    t.string('unit_entered', 30).notNullable()
    t.string('method', 200).notNullable().defaultTo('')
    t.double('resolution_si')
    t.double('resolution_entered')
    // statistics of this reading alone, in SI (readings are never edited, only deleted)
    t.integer('n').notNullable()
    t.double('mean_si').notNullable()
    t.double('sd_si')
    t.double('u_a_si')
    t.double('u_b_si')
    t.double('u_si')
    t.double('nu_eff')
    t.double('ci_low_si')
    t.double('ci_high_si')
    t.timestamp('taken_at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.uuid('taken_by').references('users.id').onDelete('SET NULL')
    t.uuid('rig_token_id').references('rig_tokens.id').onDelete('SET NULL')
    t.text('notes').notNullable().defaultTo('')
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.index(['target_id', 'revision_id'])
    t.index(['revision_id'])
  })
  await knex.raw(`ALTER TABLE readings ADD CONSTRAINT readings_values_check CHECK (
    cardinality(values_si) BETWEEN 1 AND 10000 AND cardinality(values_entered) = cardinality(values_si) AND n = cardinality(values_si))`)
  await knex.raw(`ALTER TABLE readings ADD CONSTRAINT readings_resolution_check CHECK (
    (resolution_si IS NULL OR resolution_si >= 0) AND (resolution_entered IS NULL OR resolution_entered >= 0))`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('readings')
}
