import type { Knex } from 'knex'

// Readings measured as a track: positions marked at times (on frames of footage), kept with the
// reading as {timeUnit, unit, points: [{t, x, frame?}], file}. The reading itself is the line's
// slope with its standard error and n − 2 degrees of freedom, stored as a stated result, so
// pooling, status and movement treat it as one. Existing rows keep null: not a track.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('readings', (t) => {
    t.jsonb('track')
  })
  await knex.raw(`ALTER TABLE readings ADD CONSTRAINT readings_track_check CHECK (
    track IS NULL OR (stated_u_si IS NOT NULL AND stated_dof IS NOT NULL AND jsonb_typeof(track -> 'points') = 'array'))`)
}

export async function down(knex: Knex): Promise<void> {
  // without its points a track reading would look like any stated result: refuse rather than lose them
  const held = await knex('readings').whereNotNull('track').count({ n: '*' }).first()
  if (Number(held?.n ?? 0) > 0) {
    throw new Error(`${String(held!.n)} readings are tracks (positions at times); delete them before rolling this migration back`)
  }
  await knex.raw('ALTER TABLE readings DROP CONSTRAINT readings_track_check')
  await knex.schema.alterTable('readings', (t) => {
    t.dropColumn('track')
  })
}
