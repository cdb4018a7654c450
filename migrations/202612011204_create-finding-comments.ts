import type { Knex } from 'knex'

// Comments on findings: the Markdown source as written (rendered and sanitized when read), and
// the team members it mentions, matched when it was written.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('finding_comments', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'))
    t.uuid('finding_id').notNullable().references('findings.id').onDelete('CASCADE')
    t.uuid('author_id').references('users.id').onDelete('SET NULL')
    t.text('body').notNullable()
    t.specificType('mentions', 'uuid[]').notNullable().defaultTo('{}')
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.index(['finding_id', 'created_at'])
  })
  await knex.raw(`ALTER TABLE finding_comments ADD CONSTRAINT finding_comments_body_check CHECK (char_length(btrim(body)) BETWEEN 1 AND 10000)`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('finding_comments')
}
