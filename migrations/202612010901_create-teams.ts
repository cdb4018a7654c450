import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('teams', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'))
    t.string('name', 120).notNullable()
    t.string('slug', 80).notNullable().unique()
    t.boolean('personal').notNullable().defaultTo(false)
    t.boolean('demo').notNullable().defaultTo(false)
    t.timestamps(true, true)
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('teams')
}
