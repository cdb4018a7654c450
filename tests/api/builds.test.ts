import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { addReading, newRevision, newTarget } from '../support/measure'

describe('builds', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  it('GET /api/v1/builds/:build gives the build, the caller’s role and the team', async () => {
    const res = await w.reviewer.client.get(`/api/v1/builds/${w.build.slug}`)
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ id: w.build.id, slug: w.build.slug, name: 'Matrix rig', archived: false, archivedAt: null, role: 'reviewer', team: { id: w.team.id, slug: w.team.slug } })
    expect(typeof res.body.team.name).toBe('string')
    const byId = await w.engineer.client.get(`/api/v1/builds/${w.build.id}`)
    expect(byId.body).toMatchObject({ slug: w.build.slug, role: 'engineer' })
  })

  it('PATCH edits the name and summary, archives and restores (audited)', async () => {
    const b = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'To archive' })).body
    const renamed = await w.engineer.client.patch(`/api/v1/builds/${b.slug}`, { name: 'Renamed rig', summary: 'New summary' })
    expect(renamed.status).toBe(200)
    expect(renamed.body).toMatchObject({ name: 'Renamed rig', summary: 'New summary', slug: b.slug, archived: false })

    const archived = await w.engineer.client.patch(`/api/v1/builds/${b.slug}`, { archived: true })
    expect(archived.body.archived).toBe(true)
    const active = await w.reviewer.client.get(`/api/teams/${w.team.slug}/builds`)
    expect(active.body.map((x: { slug: string }) => x.slug)).not.toContain(b.slug)
    const all = await w.reviewer.client.get(`/api/teams/${w.team.slug}/builds?archived=1`)
    expect(all.body.find((x: { slug: string }) => x.slug === b.slug)).toMatchObject({ archived: true, name: 'Renamed rig' })

    const restored = await w.engineer.client.patch(`/api/v1/builds/${b.slug}`, { archived: false })
    expect(restored.body.archived).toBe(false)
    const actions = await testDb()('audit_log').where({ team_id: w.team.id }).whereRaw(`detail->>'build' = ?`, [b.slug]).orderBy('id').pluck('action')
    expect(actions).toEqual(['build.created', 'build.updated', 'build.archived', 'build.restored'])
  })

  it('refuses bad input (400) and a Reviewer (403), changing nothing', async () => {
    const before = await testDb()('builds').where({ id: w.build.id }).first()
    for (const body of [{ name: '' }, { name: 'a\u0000b' }, { archived: 'yes' }, { summary: 'x'.repeat(2001) }]) {
      const res = await w.engineer.client.patch(`/api/v1/builds/${w.build.slug}`, body)
      expect(res.status, JSON.stringify(body)).toBe(400)
    }
    expect((await w.reviewer.client.patch(`/api/v1/builds/${w.build.slug}`, { name: 'Nope' })).status).toBe(403)
    expect(await testDb()('builds').where({ id: w.build.id }).first()).toEqual(before)
  })

  it('the team’s build list carries each build’s health', async () => {
    const b = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Health check' })).body
    const fresh = await w.reviewer.client.get(`/api/teams/${w.team.slug}/builds`)
    expect(fresh.body.find((x: { slug: string }) => x.slug === b.slug)).toEqual({
      id: b.id, name: 'Health check', slug: b.slug, summary: '', archived: false, createdAt: expect.any(String),
      targetsMet: 0, targetsTotal: 0, lastRevision: null, openFindings: 0,
    })
    const c = w.engineer.client
    await newTarget(c, b.slug, { key: 'met_one', comparator: 'atLeast', threshold: 10 })
    await newTarget(c, b.slug, { key: 'short_one', comparator: 'atLeast', threshold: 10 })
    await newTarget(c, b.slug, { key: 'not_yet', comparator: 'atLeast', threshold: 10 })
    await newRevision(c, b.slug, 'R1')
    await newRevision(c, b.slug, 'R2')
    await addReading(c, b.slug, { revision: 'R1', target: 'met_one', values: [5, 5.1, 4.9], unit: 'N' })
    await addReading(c, b.slug, { revision: 'R2', target: 'met_one', values: [12, 12.1, 11.9], unit: 'N' })
    // latest is R1 for this one, where it was met; a later revision without a reading doesn't reset it
    await addReading(c, b.slug, { revision: 'R1', target: 'short_one', values: [8, 8.1, 7.9], unit: 'N' })
    const list = await w.reviewer.client.get(`/api/teams/${w.team.slug}/builds`)
    expect(list.body.find((x: { slug: string }) => x.slug === b.slug)).toMatchObject({ targetsMet: 1, targetsTotal: 3, lastRevision: 'R2', openFindings: 0 })
    expect((await w.reviewer.client.get(`/api/teams/${w.team.slug}/builds?archived=yes`)).status).toBe(400)
  })
})
