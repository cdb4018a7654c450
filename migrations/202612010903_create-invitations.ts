import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('invitations', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'))
    t.uuid('team_id').notNullable().references('teams.id').onDelete('CASCADE')
    t.string('email', 254).notNullable()
    t.string('role', 16).notNullable()
    // sha256 of the token in the link; the token itself is never stored
    t.string('token_hash', 64).notNullable().unique()
    t.uuid('invited_by').references('users.id').onDelete('SET NULL')
    t.timestamp('expires_at', { useTz: true }).notNullable()
    t.timestamp('accepted_at', { useTz: true })
    t.uuid('accepted_by').references('users.id').onDelete('SET NULL')
    t.timestamp('cancelled_at', { useTz: true })
    t.timestamps(true, true)
    t.index(['team_id'])
    t.check(`role in ('owner', 'engineer', 'reviewer')`, [], 'invitations_role_check')
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('invitations')
}
