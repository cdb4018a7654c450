import type { Knex } from 'knex'

// Fixes: the corrective actions of a finding. A landed fix names the revision it landed in.
// That revision can't be deleted on its own while a fix points at it (no ON DELETE action);
// deleting the whole build removes both in one statement.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('fixes', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'))
    t.uuid('finding_id').notNullable().references('findings.id').onDelete('CASCADE')
    t.string('description', 2000).notNullable()
    t.uuid('owner_id').references('users.id').onDelete('SET NULL')
    t.date('due_on')
    t.string('state', 12).notNullable().defaultTo('planned')
    t.uuid('landed_revision_id').references('revisions.id')
    t.uuid('created_by').references('users.id').onDelete('SET NULL')
    t.timestamps(true, true)
    t.index(['finding_id'])
    // "My fixes": a person's open fixes by due date
    t.index(['owner_id', 'state', 'due_on'])
    t.index(['landed_revision_id'])
  })
  await knex.raw(`ALTER TABLE fixes ADD CONSTRAINT fixes_state_check CHECK (state IN ('planned', 'in-progress', 'landed', 'dropped'))`)
  await knex.raw(`ALTER TABLE fixes ADD CONSTRAINT fixes_landed_check CHECK ((state = 'landed') = (landed_revision_id IS NOT NULL))`)
  await knex.raw(`ALTER TABLE fixes ADD CONSTRAINT fixes_description_check CHECK (char_length(btrim(description)) > 0)`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('fixes')
}
