import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('builds', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'))
    t.uuid('team_id').notNullable().references('teams.id').onDelete('CASCADE')
    t.string('name', 120).notNullable()
    t.string('slug', 80).notNullable().unique()
    t.text('summary').notNullable().defaultTo('')
    t.timestamp('archived_at', { useTz: true })
    t.uuid('created_by').references('users.id').onDelete('SET NULL')
    t.timestamps(true, true)
    t.index(['team_id'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('builds')
}
