import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('audit_log', (t) => {
    t.bigIncrements('id')
    t.uuid('team_id').references('teams.id').onDelete('CASCADE')
    t.uuid('actor_id').references('users.id').onDelete('SET NULL')
    t.string('actor_label', 254).notNullable().defaultTo('')
    t.string('action', 48).notNullable()
    t.jsonb('detail').notNullable().defaultTo('{}')
    t.string('ip', 64)
    t.string('user_agent', 300)
    t.timestamp('at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.index(['team_id', 'at'])
    t.index(['actor_id', 'at'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('audit_log')
}
