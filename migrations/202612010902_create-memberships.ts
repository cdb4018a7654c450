import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('memberships', (t) => {
    t.uuid('team_id').notNullable().references('teams.id').onDelete('CASCADE')
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE')
    t.string('role', 16).notNullable()
    t.timestamps(true, true)
    t.primary(['team_id', 'user_id'])
    t.index(['user_id'])
    t.check(`role in ('owner', 'engineer', 'reviewer')`, [], 'memberships_role_check')
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('memberships')
}
