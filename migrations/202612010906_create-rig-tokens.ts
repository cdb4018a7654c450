import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('rig_tokens', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'))
    t.uuid('build_id').notNullable().references('builds.id').onDelete('CASCADE')
    t.string('name', 80).notNullable()
    // first characters of the token, shown in lists so people can tell tokens apart
    t.string('prefix', 16).notNullable()
    t.string('token_hash', 64).notNullable().unique()
    t.uuid('created_by').references('users.id').onDelete('SET NULL')
    t.timestamp('expires_at', { useTz: true })
    t.timestamp('last_used_at', { useTz: true })
    t.string('last_used_ip', 64)
    t.timestamp('revoked_at', { useTz: true })
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.index(['build_id'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('rig_tokens')
}
