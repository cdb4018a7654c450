import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('revisions', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'))
    t.uuid('build_id').notNullable().references('builds.id').onDelete('CASCADE')
    t.string('label', 40).notNullable()
    // the build's order of revisions (1, 2, 3 …); movement compares neighbours in this order
    t.integer('seq').notNullable()
    t.uuid('parent_id').references('revisions.id').onDelete('SET NULL')
    t.date('built_on')
    t.text('summary').notNullable().defaultTo('')
    t.jsonb('changes').notNullable().defaultTo('[]')
    t.jsonb('parameters').notNullable().defaultTo('[]')
    t.timestamp('frozen_at', { useTz: true })
    t.uuid('frozen_by').references('users.id').onDelete('SET NULL')
    t.uuid('created_by').references('users.id').onDelete('SET NULL')
    t.timestamps(true, true)
    t.unique(['build_id', 'seq'])
    t.index(['parent_id'])
  })
  // labels are unique in a build whatever their case, so "r2" can't stand beside "R2"
  await knex.raw('CREATE UNIQUE INDEX revisions_build_id_label_unique ON revisions (build_id, lower(label))')
  await knex.raw(`ALTER TABLE revisions ADD CONSTRAINT revisions_changes_check CHECK (jsonb_typeof(changes) = 'array')`)
  await knex.raw(`ALTER TABLE revisions ADD CONSTRAINT revisions_parameters_check CHECK (jsonb_typeof(parameters) = 'array')`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('revisions')
}
