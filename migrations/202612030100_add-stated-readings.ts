import type { Knex } from 'knex'

// Readings that come as one result with its own standard uncertainty ("stated" readings): the
// uncertainty in SI and as entered, and the effective degrees of freedom (null: infinite).
// values_si / values_entered hold the one value and n = 1. Existing rows keep null in the new
// columns, which marks a samples reading, so they read exactly as before. cell_stats counts the
// stated results pooled in each cell (0 for every existing cell: samples only).
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('readings', (t) => {
    t.double('stated_u_si')
    t.double('stated_u_entered')
    t.double('stated_dof')
  })
  await knex.raw(`ALTER TABLE readings ADD CONSTRAINT readings_stated_check CHECK (
    (stated_u_si IS NULL AND stated_u_entered IS NULL AND stated_dof IS NULL)
    OR (stated_u_si >= 0 AND stated_u_entered >= 0 AND n = 1 AND resolution_si IS NULL
      AND (stated_dof IS NULL OR (stated_dof > 0 AND stated_dof < 'Infinity'::float8))))`)
  await knex.schema.alterTable('cell_stats', (t) => {
    t.integer('stated').notNullable().defaultTo(0)
  })
  await knex.raw('ALTER TABLE cell_stats ADD CONSTRAINT cell_stats_stated_check CHECK (stated >= 0 AND stated <= readings)')
}

export async function down(knex: Knex): Promise<void> {
  // a stated reading has no place in the older schema, and its cell's statistics would be wrong
  // without it: refuse rather than lose data silently
  const held = await knex('readings').whereNotNull('stated_u_si').count({ n: '*' }).first()
  if (Number(held?.n ?? 0) > 0) {
    throw new Error(`${String(held!.n)} readings are stated results (value ± u); delete them before rolling this migration back`)
  }
  await knex.raw('ALTER TABLE cell_stats DROP CONSTRAINT cell_stats_stated_check')
  await knex.schema.alterTable('cell_stats', (t) => {
    t.dropColumn('stated')
  })
  await knex.raw('ALTER TABLE readings DROP CONSTRAINT readings_stated_check')
  await knex.schema.alterTable('readings', (t) => {
    t.dropColumn('stated_u_si')
    t.dropColumn('stated_u_entered')
    t.dropColumn('stated_dof')
  })
}
