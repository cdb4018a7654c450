import type { Knex } from 'knex'

// A finding's history: who did what and when, with what changed in `detail` (lane moves with
// any override and its reason, edited fields from → to, fixes added or changed).
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('finding_events', (t) => {
    t.bigIncrements('id')
    t.uuid('finding_id').notNullable().references('findings.id').onDelete('CASCADE')
    t.string('kind', 16).notNullable()
    t.uuid('actor_id').references('users.id').onDelete('SET NULL')
    t.string('actor_label', 254).notNullable().defaultTo('')
    t.jsonb('detail').notNullable().defaultTo('{}')
    t.timestamp('at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.index(['finding_id', 'at'])
  })
  await knex.raw(`ALTER TABLE finding_events ADD CONSTRAINT finding_events_kind_check CHECK (kind IN ('created', 'edited', 'moved', 'fix-added', 'fix-edited'))`)
  await knex.raw(`ALTER TABLE finding_events ADD CONSTRAINT finding_events_detail_check CHECK (jsonb_typeof(detail) = 'object')`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('finding_events')
}
