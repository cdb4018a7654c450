import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  // What reviewers are told about: written in the same transaction as the change that causes it.
  await knex.schema.createTable('events', (t) => {
    t.bigIncrements('id')
    t.uuid('build_id').notNullable().references('builds.id').onDelete('CASCADE')
    t.string('type', 24).notNullable()
    t.uuid('target_id').references('targets.id').onDelete('CASCADE')
    t.uuid('revision_id').references('revisions.id').onDelete('SET NULL')
    // statuses or numbers before and after, and what the change was (e.g. which kind of slip)
    t.jsonb('before')
    t.jsonb('after')
    t.jsonb('detail').notNullable().defaultTo('{}')
    // set once the immediate deliveries of this event are queued
    t.timestamp('fanned_out_at', { useTz: true })
    t.timestamp('at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.index(['build_id', 'id'])
  })
  await knex.raw(`ALTER TABLE events ADD CONSTRAINT events_type_check CHECK (type IN ('target.met', 'target.slipped', 'finding.safety', 'revision.frozen'))`)
  await knex.raw('CREATE INDEX events_pending_fanout ON events (id) WHERE fanned_out_at IS NULL')
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('events')
}
