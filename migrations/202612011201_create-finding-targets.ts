import type { Knex } from 'knex'

// The targets a finding hurts (targets of the finding's own build; the service checks that).
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('finding_targets', (t) => {
    t.uuid('finding_id').notNullable().references('findings.id').onDelete('CASCADE')
    t.uuid('target_id').notNullable().references('targets.id').onDelete('CASCADE')
    t.primary(['finding_id', 'target_id'])
    // "open findings that hurt this target" on the target cards
    t.index(['target_id'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('finding_targets')
}
