import { randomBytes } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, testDb, type World } from '../support/api'

// Two creations of the same name at once: the second one's insert meets the first one's row,
// which its own look for a free slug could not see yet. The test holds the first insert open
// in a transaction of its own until the app's insert waits on it, then commits it.

/** Resolves once some connection waits on another transaction's lock (the app's insert). */
async function untilSomeoneWaits() {
  const db = testDb()
  for (let i = 0; i < 200; i++) {
    const { rows } = await db.raw(`SELECT count(*)::int AS n FROM pg_stat_activity WHERE wait_event_type = 'Lock' AND datname = current_database()`)
    if (rows[0].n > 0) return
    await new Promise(resolve => setTimeout(resolve, 25))
  }
  throw new Error('the app never waited on the open insert')
}

describe('slugs taken by a concurrent insert', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  it('a build named like one being created meanwhile gets the next slug, not a 500', async () => {
    const base = `race-${randomBytes(3).toString('hex')}`
    const trx = await testDb().transaction()
    await trx('builds').insert({ team_id: w.team.id, name: base, slug: base, summary: '' })
    const pending = w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: base })
    await untilSomeoneWaits()
    await trx.commit()
    const res = await pending
    expect(res.status).toBe(201)
    expect(res.body.slug).toBe(`${base}-2`)
  })

  it('a build asking for a slug taken meanwhile is a 409, and nothing is kept', async () => {
    const slug = `asked-${randomBytes(3).toString('hex')}`
    const trx = await testDb().transaction()
    await trx('builds').insert({ team_id: w.team.id, name: slug, slug, summary: '' })
    const pending = w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Asked for', slug })
    await untilSomeoneWaits()
    await trx.commit()
    const res = await pending
    expect(res.status).toBe(409)
    expect(res.body.data.fields.slug).toBe('Taken')
    expect(await testDb()('builds').where({ name: 'Asked for' }).count({ n: '*' })).toEqual([{ n: '0' }])
  })

  it('a sign-up whose team name is being taken meanwhile gets the next slug', async () => {
    const name = `Racer ${randomBytes(3).toString('hex')}`
    const base = `${name.toLowerCase().replace(/\s+/g, '-')}-s-team`
    const trx = await testDb().transaction()
    await trx('teams').insert({ name: `${name}'s team`, slug: base })
    const client = new Client()
    const pending = client.post('/api/auth/signup', { name, email: `${randomBytes(4).toString('hex')}@example.test`, password: 'long enough pass phrase 7' })
    await untilSomeoneWaits()
    await trx.commit()
    const res = await pending
    expect(res.status).toBe(201)
    const teams = await client.get('/api/v1/teams')
    expect(teams.body[0].slug).toBe(`${base}-2`)
  })
})
