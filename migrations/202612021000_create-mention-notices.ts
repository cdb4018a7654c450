import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  // One row per person a comment mentions, written with the comment; the queue e-mails them and
  // marks the row sent (the deliveries table keeps each e-mail to one).
  await knex.schema.createTable('mention_notices', (t) => {
    t.uuid('comment_id').notNullable().references('finding_comments.id').onDelete('CASCADE')
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE')
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now())
    t.timestamp('sent_at', { useTz: true })
    t.primary(['comment_id', 'user_id'])
  })
  await knex.raw('CREATE INDEX mention_notices_pending ON mention_notices (created_at) WHERE sent_at IS NULL')
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('mention_notices')
}
