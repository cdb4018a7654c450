import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  // Sessions ended by signing out: a cookie carrying one of these ids is refused until the
  // cookie would have expired anyway (then the row can go).
  await knex.schema.createTable('revoked_sessions', (t) => {
    t.text('sid').primary()
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE')
    t.timestamp('expires_at', { useTz: true }).notNullable()
  })
  await knex.raw('CREATE INDEX revoked_sessions_expiry ON revoked_sessions (expires_at)')
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('revoked_sessions')
}
