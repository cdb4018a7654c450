import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  // One row per e-mail Ratchet means to send; the unique key makes each one go out at most once.
  await knex.schema.createTable('deliveries', (t) => {
    t.bigIncrements('id')
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE')
    t.uuid('build_id').notNullable().references('builds.id').onDelete('CASCADE')
    // 'event:<id>' for an immediate e-mail, 'digest:<build>:<first>-<last>' for a digest
    t.string('key', 120).notNullable()
    t.string('status', 10).notNullable()
    t.specificType('event_ids', 'bigint[]').notNullable()
    t.timestamp('claimed_at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.timestamp('sent_at', { useTz: true })
    t.unique(['user_id', 'key'])
  })
  await knex.raw(`ALTER TABLE deliveries ADD CONSTRAINT deliveries_status_check CHECK (status IN ('sending', 'sent'))`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('deliveries')
}
