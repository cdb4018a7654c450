import type { Knex } from 'knex'

// Evidence files: the bytes live in the file store (server/utils/files/storage.ts) under a key the
// server makes up; this row is written only once the bytes are stored. A team's storage use is
// the sum of `size` over its builds' files (builds.team_id, then this table's (build_id, size)).
//
// onDelete, on purpose:
// - build: CASCADE. The build and its evidence go together; the bytes left without a row are
//   removed by the sweep (scripts/sweep-files.ts).
// - revision, reading, finding: SET NULL. Evidence outlives a deleted reading, revision or
//   finding and stays on the build (a reading's file also names the reading's revision, so it
//   stays with that revision when a wrong reading is deleted).
// - uploaded_by, rig_token_id: SET NULL. Who uploaded is history; the file stays.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('files', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'))
    t.uuid('build_id').notNullable().references('builds.id').onDelete('CASCADE')
    t.uuid('revision_id').references('revisions.id').onDelete('SET NULL')
    t.uuid('reading_id').references('readings.id').onDelete('SET NULL')
    t.uuid('finding_id').references('findings.id').onDelete('SET NULL')
    // made by the server (never from the client's name)
    t.string('storage_key', 100).notNullable().unique()
    // the client's name, sanitized for display and downloads
    t.string('name', 255).notNullable()
    t.bigInteger('size').notNullable()
    // sniffed from the first bytes, not taken from the client
    t.string('content_type', 100).notNullable()
    // image, video, audio, pdf, text or other (shared/utils/contentTypes.ts kindOf), for the filters
    t.string('kind', 10).notNullable()
    t.specificType('sha256', 'char(64)').notNullable()
    t.uuid('uploaded_by').references('users.id').onDelete('SET NULL')
    t.uuid('rig_token_id').references('rig_tokens.id').onDelete('SET NULL')
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.index(['build_id', 'created_at'])
    t.index(['revision_id'])
    t.index(['reading_id'])
    t.index(['finding_id'])
  })
  // the quota sums sizes per build without reading the table
  await knex.raw('CREATE INDEX files_build_id_size_index ON files (build_id) INCLUDE (size)')
  await knex.raw('ALTER TABLE files ADD CONSTRAINT files_size_check CHECK (size >= 0)')
  await knex.raw(`ALTER TABLE files ADD CONSTRAINT files_kind_check CHECK (kind IN ('image', 'video', 'audio', 'pdf', 'text', 'other'))`)
  await knex.raw(`ALTER TABLE files ADD CONSTRAINT files_sha256_check CHECK (sha256 ~ '^[0-9a-f]{64}$')`)
  await knex.raw(`ALTER TABLE files ADD CONSTRAINT files_name_check CHECK (char_length(name) > 0)`)
  await knex.raw(`ALTER TABLE files ADD CONSTRAINT files_storage_key_check CHECK (storage_key ~ '^[0-9a-f]{2}/[0-9a-f-]{36}$')`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('files')
}
