import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  // the finding a `finding.safety` event is about
  await knex.schema.alterTable('events', (t) => {
    t.uuid('finding_id').references('findings.id').onDelete('CASCADE')
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('events', (t) => {
    t.dropColumn('finding_id')
  })
}
