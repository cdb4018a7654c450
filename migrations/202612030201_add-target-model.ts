import type { Knex } from 'knex'

// A target's design model: a formula over the revisions' design parameters (shared/utils/design.ts)
// predicting what the target should measure. Null when the target has none.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('targets', (t) => {
    t.text('model')
  })
  await knex.raw(`ALTER TABLE targets ADD CONSTRAINT targets_model_check CHECK (model IS NULL OR char_length(btrim(model)) BETWEEN 1 AND 500)`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('ALTER TABLE targets DROP CONSTRAINT targets_model_check')
  await knex.schema.alterTable('targets', (t) => {
    t.dropColumn('model')
  })
}
