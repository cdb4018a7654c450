import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'
import type { Knex } from 'knex'

// Demo data only (invented people and teams). Idempotent: running it again changes nothing.
export const DEMO_PASSWORD = 'ratchet-demo'

const people = [
  { email: 'owner@demo.test', name: 'Ada Okafor (demo)' },
  { email: 'engineer@demo.test', name: 'Bram Lindqvist (demo)' },
  { email: 'engineer2@demo.test', name: 'Chiara Voss (demo)' },
  { email: 'reviewer@demo.test', name: 'Dr. Elif Marsh (demo)' },
  { email: 'outsider@demo.test', name: 'Farid Quarry (demo)' },
]

const teams = [
  {
    slug: 'northwind-mobility-lab',
    name: 'Northwind Mobility Lab',
    members: [['owner@demo.test', 'owner'], ['engineer@demo.test', 'engineer'], ['engineer2@demo.test', 'engineer'], ['reviewer@demo.test', 'reviewer']],
    builds: [
      { slug: 'trailhopper', name: 'Trailhopper', summary: 'Hub drive unit of an electric cargo trike.' },
      { slug: 'perch', name: 'Perch', summary: 'Pan-tilt head for a wildlife camera.' },
      { slug: 'arcwheel', name: 'Arcwheel', summary: 'Flywheel ball launcher for a sports-training rig.' },
    ],
  },
  {
    slug: 'quarry-works',
    name: 'Quarry Works',
    members: [['outsider@demo.test', 'owner']],
    builds: [{ slug: 'gravel-sifter', name: 'Gravel Sifter', summary: 'Vibrating screen for a small quarry (another team’s build).' }],
  },
] as const

export async function seed(knex: Knex): Promise<void> {
  const hash = new Hash(new Scrypt({}))
  await knex.transaction(async (trx) => {
    const ids: Record<string, string> = {}
    for (const p of people) {
      const found = await trx('users').whereRaw('lower(email) = ?', [p.email]).first('id')
      ids[p.email] = found?.id ?? (await trx('users').insert({ ...p, password_hash: await hash.make(DEMO_PASSWORD) }).returning('id'))[0]!.id
    }
    for (const t of teams) {
      const team = (await trx('teams').where({ slug: t.slug }).first('id'))
        ?? (await trx('teams').insert({ slug: t.slug, name: t.name, demo: true }).returning('id'))[0]!
      for (const [email, role] of t.members) {
        await trx('memberships').insert({ team_id: team.id, user_id: ids[email], role }).onConflict(['team_id', 'user_id']).ignore()
      }
      for (const b of t.builds) {
        await trx('builds').insert({ ...b, team_id: team.id, created_by: ids[t.members[0][0]] }).onConflict('slug').ignore()
      }
    }
  })
}
