import type { Knex } from 'knex'

// Findings: problems found in testing, on a build's board. `rank` orders a lane by byte order
// (shared/utils/rank.ts), hence the "C" collation whatever the database's locale; its
// uniqueness is checked at commit so a lane can be re-spread inside one transaction.
// `version` goes up on every write; a write that names an older one is refused.
const LANES = ['spotted', 'traced', 'bench', 'retest', 'closed', 'parked']
const SEVERITIES = ['safety', 'blocks-target', 'degrades', 'cosmetic']
const list = (xs: string[]) => xs.map(x => `'${x}'`).join(', ')

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('findings', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'))
    t.uuid('build_id').notNullable().references('builds.id').onDelete('CASCADE')
    t.string('title', 200).notNullable()
    // Markdown source; rendered and sanitized when read
    t.text('description').notNullable().defaultTo('')
    t.string('severity', 16).notNullable()
    t.string('lane', 10).notNullable().defaultTo('spotted')
    t.specificType('rank', 'varchar(200) COLLATE "C"').notNullable()
    t.integer('version').notNullable().defaultTo(1)
    t.uuid('seen_on_revision_id').references('revisions.id').onDelete('SET NULL')
    // set when it moves to Closed: the revision whose readings verified it, or an Owner's override
    t.timestamp('closed_at', { useTz: true })
    t.uuid('verified_revision_id').references('revisions.id').onDelete('SET NULL')
    t.text('override_reason')
    t.uuid('override_by').references('users.id').onDelete('SET NULL')
    t.uuid('created_by').references('users.id').onDelete('SET NULL')
    t.uuid('created_by_rig').references('rig_tokens.id').onDelete('SET NULL')
    t.timestamps(true, true)
    t.index(['build_id', 'severity'])
    t.index(['seen_on_revision_id'])
  })
  await knex.raw(`ALTER TABLE findings ADD CONSTRAINT findings_lane_check CHECK (lane IN (${list(LANES)}))`)
  await knex.raw(`ALTER TABLE findings ADD CONSTRAINT findings_severity_check CHECK (severity IN (${list(SEVERITIES)}))`)
  await knex.raw(`ALTER TABLE findings ADD CONSTRAINT findings_title_check CHECK (char_length(btrim(title)) > 0)`)
  await knex.raw(`ALTER TABLE findings ADD CONSTRAINT findings_version_check CHECK (version >= 1)`)
  await knex.raw(`ALTER TABLE findings ADD CONSTRAINT findings_rank_check CHECK (rank ~ '^[A-Za-z][0-9A-Za-z]*$')`)
  await knex.raw(`ALTER TABLE findings ADD CONSTRAINT findings_closed_check CHECK ((lane = 'closed') = (closed_at IS NOT NULL))`)
  // the board reads a lane in rank order through this index
  await knex.raw('ALTER TABLE findings ADD CONSTRAINT findings_lane_rank_unique UNIQUE (build_id, lane, rank) DEFERRABLE INITIALLY DEFERRED')
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('findings')
}
