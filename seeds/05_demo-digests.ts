import type { Knex } from 'knex'

// Demo only: the demo Reviewer follows Trailhopper by e-mail right away (post a reading that
// meets a target and the message shows in the mail inbox) and Perch by the daily digest. The
// events and comment mentions the earlier seeds recorded are history: marked as handed out, so
// no e-mail goes out for them when the app starts. Idempotent.

export async function seed(knex: Knex): Promise<void> {
  const reviewer = await knex('users').whereRaw('lower(email) = ?', ['reviewer@demo.test']).first('id')
  const builds = await knex('builds').whereIn('slug', ['trailhopper', 'perch']).select('id', 'slug')
  if (!reviewer || builds.length === 0) return
  await knex.transaction(async (trx) => {
    const seeded = await trx('builds').whereIn('slug', ['trailhopper', 'perch', 'arcwheel']).pluck('id') as string[]
    await trx('events').whereIn('build_id', seeded).whereNull('fanned_out_at').update({ fanned_out_at: trx.fn.now() })
    // so are the mentions in the demo's comments
    await trx('mention_notices').whereNull('sent_at').update({ sent_at: trx.fn.now() })
    for (const b of builds) {
      await trx('subscriptions')
        .insert({ user_id: reviewer.id, build_id: b.id, frequency: b.slug === 'trailhopper' ? 'immediate' : 'daily' })
        .onConflict(['user_id', 'build_id']).ignore()
    }
    // Trailhopper's history counts as already digested; Perch's waits in the next digest (see its preview)
    const last = await trx('events').where({ build_id: builds.find(b => b.slug === 'trailhopper')?.id ?? '' }).max({ id: 'id' }).first()
    const trailhopper = builds.find(b => b.slug === 'trailhopper')
    if (trailhopper && last?.id) {
      await trx('subscriptions').where({ user_id: reviewer.id, build_id: trailhopper.id, digested_through: 0 }).update({ digested_through: last.id })
    }
  })
}
