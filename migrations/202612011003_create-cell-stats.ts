import type { Knex } from 'knex'

// The statistics of each cell of the readings matrix (one target on one revision, all its
// readings pooled), in SI, with the cell's status and its movement from the previous revision
// that has a reading of the target. Written in the same transaction as every change that
// affects them (a reading added or deleted, a target's rule edited); pages only read them.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('cell_stats', (t) => {
    t.uuid('target_id').notNullable().references('targets.id').onDelete('CASCADE')
    t.uuid('revision_id').notNullable().references('revisions.id').onDelete('CASCADE')
    t.uuid('build_id').notNullable().references('builds.id').onDelete('CASCADE')
    t.integer('readings').notNullable()
    t.integer('n').notNullable()
    t.double('mean').notNullable()
    t.double('sd')
    t.double('u_a')
    t.double('u_b')
    t.double('u')
    t.double('nu_eff')
    t.double('ci_low')
    t.double('ci_high')
    t.string('status', 10).notNullable()
    t.double('delta')
    t.double('p')
    t.string('movement', 10)
    t.boolean('real')
    t.string('reason', 20)
    t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.primary(['target_id', 'revision_id'])
    t.index(['build_id'])
    t.index(['revision_id'])
  })
  await knex.raw(`ALTER TABLE cell_stats ADD CONSTRAINT cell_stats_status_check CHECK (status IN ('met', 'marginal', 'short'))`)
  await knex.raw(`ALTER TABLE cell_stats ADD CONSTRAINT cell_stats_movement_check CHECK (movement IS NULL OR movement IN ('gained', 'slipped', 'steady'))`)
  await knex.raw(`ALTER TABLE cell_stats ADD CONSTRAINT cell_stats_reason_check CHECK (reason IS NULL OR reason IN ('welch', 'noise-band', 'uncertainty', 'not-enough-data'))`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('cell_stats')
}
