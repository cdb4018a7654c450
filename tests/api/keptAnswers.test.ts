import { createHash } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, mustSucceed, testDb, type World } from '../support/api'
import { addReading, newRevision, newTarget } from '../support/measure'

// Reads and build pages kept while the team's data stamp holds (server/utils/serving/keptAnswers.ts,
// server/utils/serving/keptPages.ts, the data_stamps triggers): every change, however it is made, shows
// on the next read; nothing is served to a caller it wasn't made for.

function queriesOf(res: { headers: Headers }): number {
  const m = /queries=(\d+)/.exec(res.headers.get('server-timing') ?? '')
  if (!m) throw new Error('no Server-Timing query count')
  return Number(m[1])
}
const cacheOf = (res: { headers: Headers }) => res.headers.get('ratchet-cache')

describe('kept answers', () => {
  let w: World
  let slug: string
  let key: string
  const stampOf = async (scope: string) => (await testDb()('data_stamps').where({ scope }).first('n'))?.n as string | undefined

  beforeAll(async () => {
    w = await makeWorld()
    slug = w.build.slug
    key = (await newTarget(w.engineer.client, slug, { name: 'Lift force', unit: 'N', comparator: 'atLeast', threshold: 20 })).key
    await newRevision(w.engineer.client, slug, 'R1')
    await newRevision(w.engineer.client, slug, 'R2')
    await addReading(w.engineer.client, slug, { revision: 'R1', target: key, values: [18, 19, 18.5], unit: 'N' })
  })
  afterAll(closeTestDb)

  it('a second read of the same answer is kept: the same body, one round trip (the access check)', async () => {
    const first = await w.engineer.client.get(`/api/v1/builds/${slug}/scoreboard`)
    const second = await w.engineer.client.get(`/api/v1/builds/${slug}/scoreboard`)
    expect([first.status, second.status]).toEqual([200, 200])
    expect(cacheOf(first)).toBe('miss')
    expect(cacheOf(second)).toBe('hit')
    expect(queriesOf(second)).toBe(1)
    expect(queriesOf(first)).toBeGreaterThan(1)
    expect(second.headers.get('content-type')).toMatch(/^application\/json/)
    expect(second.body).toEqual(first.body)
  })

  it('a kept answer goes out gzip’d to a client that accepts it, the same JSON', async () => {
    const url = `${w.engineer.client.base}/api/v1/builds/${slug}/scoreboard`
    const plain = await fetch(url, { headers: { 'cookie': w.engineer.client.cookie, 'accept-encoding': 'identity' } })
    const packed = await fetch(url, { headers: { 'cookie': w.engineer.client.cookie, 'accept-encoding': 'gzip' } })
    const refused = await fetch(url, { headers: { 'cookie': w.engineer.client.cookie, 'accept-encoding': 'gzip;q=0, identity' } })
    expect([plain.status, packed.status, refused.status]).toEqual([200, 200, 200])
    expect(plain.headers.get('content-encoding')).toBeNull()
    expect(refused.headers.get('content-encoding')).toBeNull()
    expect(packed.headers.get('content-encoding')).toBe('gzip')
    expect(packed.headers.get('vary')).toMatch(/accept-encoding/i)
    expect(await packed.json()).toEqual(await plain.json())
    expect((await refused.json()).build.slug).toBe(slug)
  })

  it('a write through the API shows on the next read', async () => {
    const before = await w.engineer.client.get(`/api/v1/builds/${slug}/targets/${key}`)
    expect(before.body.history.find((h: { revision: string }) => h.revision === 'R2')?.n ?? 0).toBe(0)
    await addReading(w.engineer.client, slug, { revision: 'R2', target: key, values: [21, 22, 21.5], unit: 'N' })
    const after = await w.engineer.client.get(`/api/v1/builds/${slug}/targets/${key}`)
    expect(cacheOf(after)).toBe('miss')
    expect(after.body.history.find((h: { revision: string }) => h.revision === 'R2')).toMatchObject({ n: 3, mean: 21.5 })
  })

  it('a change made in the database directly, past the app, shows on the next read too', async () => {
    await w.engineer.client.get(`/api/v1/builds/${slug}/scoreboard`)
    const kept = await w.engineer.client.get(`/api/v1/builds/${slug}/scoreboard`)
    expect(cacheOf(kept)).toBe('hit')
    await testDb()('targets').where({ build_id: w.build.id, key }).update({ name: 'Lift force at 20 °C' })
    const after = await w.engineer.client.get(`/api/v1/builds/${slug}/scoreboard`)
    expect(cacheOf(after)).toBe('miss')
    expect(after.body.targets.find((t: { key: string }) => t.key === key).name).toBe('Lift force at 20 °C')
  })

  it('answers that show what a role may do are kept per role', async () => {
    const engineer = await w.engineer.client.get(`/api/v1/builds/${slug}/findings/open`)
    const reviewer = await w.reviewer.client.get(`/api/v1/builds/${slug}/findings/open`)
    const again = await w.engineer.client.get(`/api/v1/builds/${slug}/findings/open`)
    expect(engineer.body.canFile).toBe(true)
    expect(reviewer.body.canFile).toBe(false)
    expect(cacheOf(reviewer)).toBe('miss')
    expect(again.body.canFile).toBe(true)
  })

  it('the stamp moves with a committed change; a refused write, a rolled-back one, a no-op and a rig token’s use leave it', async () => {
    const team = w.team.id
    const start = await stampOf(team)
    expect(start).toBeDefined()
    // refused: the reading's unit is not a force
    const refused = await w.engineer.client.post(`/api/v1/builds/${slug}/readings`, { revision: 'R1', target: key, values: [1], unit: 'kg' })
    expect(refused.status).toBe(422)
    await testDb().transaction(async (trx) => {
      await trx('targets').where({ build_id: w.build.id, key }).update({ notes: 'rolled back' })
      await trx.rollback()
    }).catch(() => {})
    await testDb()('targets').where({ build_id: w.build.id, key }).update({ name: testDb().raw('name') })
    const rig = await fetch(`${w.engineer.client.base}/api/v1/builds/${slug}/scoreboard`, { headers: { authorization: `Bearer ${w.ownToken}` } })
    expect(rig.status).toBe(200)
    expect(await stampOf(team)).toBe(start)
    await testDb().transaction(async (trx) => {
      await trx('targets').where({ build_id: w.build.id, key }).update({ notes: 'checked twice' })
      await trx('revisions').where({ build_id: w.build.id, label: 'R2' }).update({ summary: 'Rebuilt hub' })
      await trx('builds').where({ id: w.build.id }).update({ name: 'Matrix rig, hub rebuilt' })
    })
    expect(BigInt((await stampOf(team))!)).toBeGreaterThan(BigInt(start!))
  })

  it('a person’s renaming moves the stamp of every team they are in, and their own', async () => {
    const [team, own] = [await stampOf(w.team.id), await stampOf(w.engineer.user.id)]
    await testDb()('users').where({ id: w.engineer.user.id }).update({ name: 'Eno Engineer-Okafor' })
    expect(await stampOf(w.team.id)).not.toBe(team)
    expect(await stampOf(w.engineer.user.id)).not.toBe(own)
    // the outsider's team isn't theirs: its stamp stays
    const elsewhere = await stampOf(w.outsider.team.id)
    await testDb()('users').where({ id: w.engineer.user.id }).update({ name: 'Eno Engineer' })
    expect(await stampOf(w.outsider.team.id)).toBe(elsewhere)
  })

  it('every table that holds a team’s, a build’s or a person’s shown data is stamped on insert, update, delete and truncate', async () => {
    const db = testDb()
    // tables of the sign-in machinery and the mail worker's bookkeeping: never shown in a kept answer
    const unstamped = ['password_resets', 'reset_requests', 'revoked_sessions', 'login_failures', 'deliveries']
    const owning = await db('information_schema.columns').where({ table_schema: 'public' })
      .whereIn('column_name', ['team_id', 'build_id', 'finding_id', 'revision_id', 'user_id']).distinct('table_name') as { table_name: string }[]
    const expected = [...new Set([...owning.map(r => r.table_name), 'teams', 'users'])].filter(t => !unstamped.includes(t)).sort()
    expect(expected).toEqual(expect.arrayContaining(['targets', 'readings', 'findings', 'fixes', 'files', 'memberships', 'builds']))
    const { rows } = await db.raw(`SELECT c.relname AS t, array_agg(g.tgname::text ORDER BY g.tgname) AS triggers
      FROM pg_trigger g JOIN pg_class c ON c.oid = g.tgrelid WHERE g.tgname LIKE 'ratchet_stamp%' GROUP BY c.relname`) as { rows: { t: string, triggers: string[] }[] }
    const byTable = Object.fromEntries(rows.map(r => [r.t, r.triggers]))
    for (const t of expected) expect(byTable[t], t).toEqual(['ratchet_stamp', 'ratchet_stamp_truncate', 'ratchet_stamp_update'])
  })
})

describe('kept build pages', () => {
  let w: World
  let slug: string
  let key: string

  beforeAll(async () => {
    w = await makeWorld()
    slug = w.build.slug
    key = (await newTarget(w.engineer.client, slug, { name: 'Hover time', unit: 's', comparator: 'atLeast', threshold: 30 })).key
  })
  afterAll(closeTestDb)

  const page = async (c: Client, path: string, headers: Record<string, string> = {}) => {
    const res = await fetch(`${c.base}${path}`, { headers: { ...(c.cookie ? { cookie: c.cookie } : {}), ...headers } })
    return { res, html: await res.text() }
  }
  const nonceOf = (res: Response) => /'nonce-([^']+)'/.exec(res.headers.get('content-security-policy') ?? '')?.[1]

  it('the same page for the same cookies is kept and served as the same bytes, gzip’d when asked', async () => {
    const one = await page(w.engineer.client, `/builds/${slug}`)
    const two = await page(w.engineer.client, `/builds/${slug}`, { 'accept-encoding': 'identity' })
    const three = await page(w.engineer.client, `/builds/${slug}`, { 'accept-encoding': 'gzip, deflate' })
    expect([one.res.status, two.res.status, three.res.status]).toEqual([200, 200, 200])
    expect([cacheOf(one.res), cacheOf(two.res), cacheOf(three.res)]).toEqual(['miss', 'hit', 'hit'])
    expect(queriesOf(two.res)).toBe(1)
    expect(two.res.headers.get('content-encoding')).toBeNull()
    expect(three.res.headers.get('content-encoding')).toBe('gzip')
    expect(three.html).toBe(two.html)
    // the rendered page, less the nonce it was rendered with
    const nonce = nonceOf(one.res)
    expect(nonce).toBeTruthy()
    expect(two.html).toBe(one.html.replaceAll(` nonce="${nonce}"`, ''))
    expect(two.html).not.toMatch(/\bnonce=/)
  })

  it('a kept page’s policy lets exactly its own inline scripts run: each named by its SHA-256 digest, no nonce', async () => {
    await page(w.engineer.client, `/builds/${slug}`)
    const kept = await page(w.engineer.client, `/builds/${slug}`)
    expect(cacheOf(kept.res)).toBe('hit')
    const csp = kept.res.headers.get('content-security-policy')!
    const scriptSrc = /script-src ([^;]*)/.exec(csp)![1]!.split(' ')
    expect(scriptSrc).not.toContainEqual(expect.stringMatching(/nonce|unsafe/))
    const inline = [...kept.html.matchAll(/<script\b([^>]*)>([\s\S]*?)<\/script>/g)]
      .filter(([, attrs]) => !/\bsrc=/.test(attrs!) && !/type="application\/json"/.test(attrs!))
    expect(inline.length).toBeGreaterThan(0)
    const digests = inline.map(([, , text]) => `'sha256-${createHash('sha256').update(text!).digest('base64')}'`)
    expect(scriptSrc.filter(s => s.startsWith(`'sha256-`)).sort()).toEqual([...new Set(digests)].sort())
  })

  it('a change since shows on the next serving', async () => {
    await page(w.engineer.client, `/builds/${slug}`)
    await mustSucceed(w.engineer.client.patch(`/api/v1/builds/${slug}/targets/${key}`, { name: 'Hover time on one pack' }), 'rename')
    const after = await page(w.engineer.client, `/builds/${slug}`)
    expect(cacheOf(after.res)).toBe('miss')
    expect(after.html).toContain('Hover time on one pack')
  })

  it('another person’s page is never served: their own is rendered', async () => {
    await page(w.engineer.client, `/builds/${slug}`)
    const theirs = await page(w.reviewer.client, `/builds/${slug}`)
    expect(cacheOf(theirs.res)).toBe('miss')
    expect(theirs.html).toContain('Rae Reviewer')
  })

  it('a page that didn’t render whole, an outsider’s and a signed-out one are not kept', async () => {
    const missing = `/builds/${slug}/targets/no_such_target`
    const a = await page(w.engineer.client, missing)
    const b = await page(w.engineer.client, missing)
    expect(b.res.status).toBe(a.res.status)
    expect(cacheOf(b.res)).toBe('miss')
    for (const c of [w.outsider.client, new Client()]) {
      const res = await page(c, `/builds/${slug}`)
      expect(cacheOf(res.res)).toBeNull()
      expect(res.html).not.toContain('Hover time on one pack')
    }
  })
})
