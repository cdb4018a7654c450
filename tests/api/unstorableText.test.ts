import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, type ApiResponse, type World } from '../support/api'
import { changedTables, dbFingerprint } from '../support/dbState'
import { importBody, uploadForm, uploadOk } from '../support/files'
import { newRevision, uniqueKey } from '../support/measure'

// Text PostgreSQL can't store: a NUL character (in text or jsonb) and a lone UTF-16 surrogate (in
// jsonb). JSON carries both ("\u0000", "\ud800"); the shared validation layer refuses them in any
// string of a body, a query, a multipart field or a route parameter with a 400 naming the field,
// and the data stays as it was.

const NUL = 'a\u0000b'
const LONE = 'a\uD800b'

describe('text PostgreSQL can’t store', () => {
  let w: World
  let findingId: string
  let label: string
  beforeAll(async () => {
    w = await makeWorld()
    const f = await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/findings`, { title: 'Strut creaks under load', severity: 'degrades' })
    findingId = f.body.id
    label = (await newRevision(w.engineer.client, w.build.slug, uniqueKey('R'))).label
  })
  afterAll(closeTestDb)

  /** The call is refused with `status` and a message that starts with `path`; no table changes. */
  async function refused(call: () => Promise<ApiResponse>, path: string, status = 400) {
    const before = await dbFingerprint()
    const res = await call()
    expect(res.status, JSON.stringify(res.body)).toBe(status)
    expect(res.body.message.startsWith(`${path}: `), res.body.message).toBe(true)
    expect(changedTables(before, await dbFingerprint())).toEqual([])
    return res
  }

  const cases: [string, string, () => Promise<ApiResponse>][] = [
    ['a NUL in the account name', 'name', () => w.engineer.client.patch('/api/account', { name: NUL })],
    ['a NUL in a sign-up name', 'name', () => new Client().post('/api/auth/signup', { name: NUL, email: `nul-${uniqueKey()}@example.test`, password: 'long-enough-pass-1' })],
    ['a lone surrogate in a new team’s name', 'name', () => w.owner.client.post('/api/v1/teams', { name: LONE })],
    ['a lone surrogate in a team’s new name', 'name', () => w.owner.client.patch(`/api/teams/${w.team.slug}`, { name: LONE })],
    ['a NUL in a rig token’s name', 'name', () => w.owner.client.post(`/api/builds/${w.build.slug}/tokens`, { name: NUL })],
    ['a lone surrogate in a rig token’s name', 'name', () => w.owner.client.post(`/api/builds/${w.build.slug}/tokens`, { name: LONE })],
    ['a NUL in a comment', 'body', () => w.reviewer.client.post(`/api/v1/findings/${findingId}/comments`, { body: NUL })],
    ['a lone surrogate in a fix', 'description', () => w.engineer.client.post(`/api/v1/findings/${findingId}/fixes`, { description: LONE })],
    ['a NUL in a finding’s title', 'title', () => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/findings`, { title: NUL, severity: 'degrades' })],
    ['a lone surrogate in a finding’s description', 'description', () => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/findings`, { title: 'Fine title', description: LONE, severity: 'degrades' })],
    ['a lone surrogate in a revision’s second change', 'changes.1', () => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/revisions`, { label: uniqueKey('R'), changes: ['thicker lugs', LONE] })],
    ['a NUL in an object key', '"k\\u0000"', () => w.engineer.client.patch('/api/account', { name: 'Eno Engineer', ['k\u0000']: 1 })],
    ['a NUL in the file search', 'q', () => w.engineer.client.get(`/api/v1/builds/${w.build.slug}/files?q=a%00b`)],
    ['a NUL in the file search’s revision', 'revision', () => w.engineer.client.get(`/api/v1/builds/${w.build.slug}/files?revision=R%001`)],
    ['a NUL in the file search’s target', 'target', () => w.engineer.client.get(`/api/v1/builds/${w.build.slug}/files?target=t%00`)],
  ]

  it.each(cases)('400 for %s, naming it', async (_name, path, call) => {
    await refused(call, path)
  })

  // a route parameter names a row, and no row has such a name: 404, as for any other missing one
  it.each([
    ['a NUL in a revision label in the path', 'label', () => w.engineer.client.get(`/api/v1/builds/${w.build.slug}/revisions/R%001`)],
    ['a NUL in a target key in the path', 'key', () => w.engineer.client.patch(`/api/v1/builds/${w.build.slug}/targets/t%00`, { name: 'x' })],
    ['a NUL in a revision label to sign off', 'label', () => w.owner.client.post(`/api/v1/builds/${w.build.slug}/revisions/R%00/freeze`)],
  ] as [string, string, () => Promise<ApiResponse>][])('404 for %s, naming it', async (_name, path, call) => {
    await refused(call, path, 404)
  })

  it('a NUL in a multipart field of an upload: 400 naming it, nothing stored', async () => {
    await refused(() => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/files`, uploadForm('notes.txt', 'dyno notes\n', { revision: `${label}\u0000` })), 'revision')
  })

  it('a NUL in the import’s revision: 400 naming it', async () => {
    const body = await importBody(w)
    await refused(() => w.engineer.client.post(`/api/v1/builds/${w.build.slug}/import`, { ...body, revision: `${body.revision}\u0000` }), 'revision')
  })

  it('a NUL inside the CSV, past the part of the file its type is sniffed from: 422 naming the line', async () => {
    const body = await importBody(w)
    // 5,000 clean rows (the sniffed head is the first few KB), then a revision cell with a NUL
    const rows = Array.from({ length: 5000 }, (_, i) => `${i + 1},41.${i % 10},${label}`)
    rows.push(`5001,41.0,${label}\u0000`)
    const file = await uploadOk(w.engineer.client, w.build.slug, 'late-nul.csv', `sample,torque_nm,revision\n${rows.join('\n')}\n`)
    expect(file.contentType).toMatch(/^text\//)
    const before = await dbFingerprint()
    const res = await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/import`, { ...body, file: file.id, revision: null, revisionColumn: 'revision' })
    expect(res.status, JSON.stringify(res.body)).toBe(422)
    expect(res.body.message).toMatch(/Line 5002: a cell holds the NUL character/)
    expect(changedTables(before, await dbFingerprint())).toEqual([])
  })

  it('text that is well-formed is stored as sent (a surrogate pair, a tab, a newline)', async () => {
    const res = await w.engineer.client.post(`/api/v1/findings/${findingId}/comments`, { body: 'Gauge reads 😀\tfine\nnow' })
    expect(res.status).toBe(201)
  })
})
