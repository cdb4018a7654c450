import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  // One row per "forgot password" request, known address or not: the throttle counts them, and
  // the queue settles each once (an e-mail with a link when the address has an account).
  await knex.schema.createTable('reset_requests', (t) => {
    t.bigIncrements('id').primary()
    t.text('email').notNullable()
    t.text('ip').notNullable()
    t.text('user_agent').notNullable().defaultTo('')
    t.timestamp('at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.timestamp('settled_at', { useTz: true })
  })
  await knex.raw('CREATE INDEX reset_requests_email ON reset_requests (email, at)')
  await knex.raw('CREATE INDEX reset_requests_ip ON reset_requests (ip, at)')
  await knex.raw('CREATE INDEX reset_requests_pending ON reset_requests (id) WHERE settled_at IS NULL')
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('reset_requests')
}
