import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('users', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'))
    t.string('email', 254).notNullable()
    t.string('name', 120).notNullable()
    t.text('password_hash').notNullable()
    // Bumped when a password is reset: sessions carrying an older value are ended.
    t.integer('session_version').notNullable().defaultTo(1)
    t.timestamps(true, true)
  })
  await knex.raw('CREATE UNIQUE INDEX users_email_lower_unique ON users (lower(email))')
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('users')
}
