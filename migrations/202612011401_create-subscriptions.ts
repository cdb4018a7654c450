import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  // A person's digest choice for one build. No row: Reviewers get the daily digest, others none.
  await knex.schema.createTable('subscriptions', (t) => {
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE')
    t.uuid('build_id').notNullable().references('builds.id').onDelete('CASCADE')
    t.string('frequency', 10).notNullable()
    // the newest event a daily or weekly digest has covered
    t.bigInteger('digested_through').notNullable().defaultTo(0)
    t.timestamps(true, true)
    t.primary(['user_id', 'build_id'])
    t.index(['build_id'])
  })
  await knex.raw(`ALTER TABLE subscriptions ADD CONSTRAINT subscriptions_frequency_check CHECK (frequency IN ('immediate', 'daily', 'weekly', 'off'))`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('subscriptions')
}
