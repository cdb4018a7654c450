import type { Knex } from 'knex'

// A derived target: a formula over other targets' keys (shared/utils/derived.ts), evaluated per
// revision from its inputs' pooled means. Null for a measured target. A derived target takes no
// readings of its own, so it never has rows in readings or cell_stats.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('targets', (t) => {
    t.text('formula')
  })
  await knex.raw(`ALTER TABLE targets ADD CONSTRAINT targets_formula_check CHECK (formula IS NULL OR char_length(btrim(formula)) BETWEEN 1 AND 500)`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('ALTER TABLE targets DROP CONSTRAINT targets_formula_check')
  await knex.schema.alterTable('targets', (t) => {
    t.dropColumn('formula')
  })
}
