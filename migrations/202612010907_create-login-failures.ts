import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  // Failed sign-ins, counted per address+IP and per IP in a sliding window.
  await knex.schema.createTable('login_failures', (t) => {
    t.bigIncrements('id')
    t.string('email', 254).notNullable()
    t.string('ip', 64).notNullable()
    t.timestamp('at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.index(['email', 'ip', 'at'])
    t.index(['ip', 'at'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('login_failures')
}
