import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { BASE_URL } from '../support/env'
import { uploadForm } from '../support/files'

describe('cross-site requests', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  const elsewhere = { origin: 'https://elsewhere.example' }

  it('a change with another site’s Origin (or Referer) is a 403 and changes nothing; ours, or none, goes through', async () => {
    const count = async () => Number((await testDb()('findings').where({ build_id: w.build.id }).count<{ count: string }[]>('* as count'))[0]!.count)
    const before = await count()
    const path = `/api/v1/builds/${w.build.slug}/findings`
    const body = { title: 'Cross-site probe', severity: 'degrades' }
    expect((await w.engineer.client.post(path, body, elsewhere)).status).toBe(403)
    expect((await w.engineer.client.post(path, body, { referer: 'https://elsewhere.example/page' })).status).toBe(403)
    expect((await w.engineer.client.post(path, body, { origin: 'null' })).status).toBe(403)
    expect((await w.engineer.client.request('PATCH', '/api/account', { name: 'Renamed Elsewhere' }, elsewhere)).status).toBe(403)
    expect((await w.engineer.client.request('DELETE', `/api/v1/files/${'0'.repeat(8)}-0000-4000-8000-${'0'.repeat(12)}`, undefined, elsewhere)).status).toBe(403)
    expect(await count()).toBe(before)
    expect((await w.engineer.client.post(path, body, { origin: new URL(BASE_URL).origin })).status).toBe(201)
    expect((await w.engineer.client.post(path, body, { referer: `${BASE_URL}/builds/${w.build.slug}` })).status).toBe(201)
    expect((await w.engineer.client.post(path, body)).status).toBe(201)
    // reads are not refused
    expect((await w.engineer.client.get('/api/account', elsewhere)).status).toBe(200)
  })

  it('a rig token with no Origin works; a cross-site multipart upload is refused', async () => {
    const rig = new Client()
    rig.bearer = w.ownToken
    expect((await rig.post(`/api/v1/builds/${w.build.slug}/findings`, { title: 'From the rig', severity: 'degrades' })).status).toBe(201)
    expect((await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/files`, uploadForm('x.txt', 'x'), elsewhere)).status).toBe(403)
  })

  it('JSON routes take only application/json (415), the upload route only multipart (415)', async () => {
    const form = 'title=Form+finding&severity=degrades'
    const res = await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/findings`, form, { 'content-type': 'application/x-www-form-urlencoded' })
    expect(res.status).toBe(415)
    expect((await w.engineer.client.request('PATCH', '/api/account', 'name=Plain', { 'content-type': 'text/plain' })).status).toBe(415)
    expect((await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/findings`, uploadForm('x.txt', 'x'))).status).toBe(415)
    expect((await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/files`, JSON.stringify({ file: 'x' }), { 'content-type': 'application/json' })).status).toBe(415)
    // with a charset parameter it is still JSON
    expect((await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/findings`, JSON.stringify({ title: 'Charset finding', severity: 'degrades' }), { 'content-type': 'application/json; charset=utf-8' })).status).toBe(201)
  })
})
