import { randomBytes, randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, testDb, type ApiResponse, type World } from '../support/api'
import { uploadOk } from '../support/files'
import { hashed } from '../support/routeTable'

// What a caller can't see answers exactly as what doesn't exist: the same status and the same
// words for another team's finding, file, reading, fix, token or invitation as for a random id,
// so an answer never tells that a row exists.

describe('rows the caller can’t see answer as missing ones', () => {
  let w: World
  // rows of the world's team, which the outsider (another team's member) can't see
  let finding: string
  let fix: string
  let file: string
  let reading: string
  let token: string
  let invitation: string
  beforeAll(async () => {
    w = await makeWorld()
    finding = (await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/findings`, { title: 'Hinge pin walks out', severity: 'degrades' })).body.id
    fix = (await w.engineer.client.post(`/api/v1/findings/${finding}/fixes`, { description: 'Circlip groove' })).body.id
    file = (await uploadOk(w.engineer.client, w.build.slug, 'hinge.txt', 'pin notes\n')).id
    const t = await w.owner.client.post(`/api/v1/builds/${w.build.slug}/targets`, { key: `hinge_${randomBytes(3).toString('hex')}`, name: 'Hinge', unit: 'N', comparator: 'atLeast', threshold: 10 })
    const r = await w.owner.client.post(`/api/v1/builds/${w.build.slug}/revisions`, { label: `H${randomBytes(3).toString('hex')}` })
    reading = (await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/readings`, { revision: r.body.label, target: t.body.key, values: [12, 13], unit: 'N' })).body.reading.id
    token = (await testDb()('rig_tokens').where({ build_id: w.build.id }).first('id')).id
    const [inv] = await testDb()('invitations').insert({
      team_id: w.team.id, email: `hidden-${randomBytes(4).toString('hex')}@example.test`, role: 'engineer',
      token_hash: hashed(randomBytes(24).toString('base64url')), invited_by: w.owner.user.id,
      expires_at: testDb().raw(`now() + interval '7 days'`),
    }).returning('id')
    invitation = inv.id
  })
  afterAll(closeTestDb)

  const rig = () => Object.assign(new Client(), { bearer: w.foreignToken })
  const outsider = () => w.outsider.client
  const same = (a: ApiResponse, b: ApiResponse) => {
    expect(a.status).toBe(404)
    expect({ status: a.status, message: a.body?.message }).toEqual({ status: b.status, message: b.body?.message })
  }

  // [what, who asks, the request for an id]
  const cases: [string, () => Client, (id: () => string) => Promise<ApiResponse>, () => string][] = [
    ['GET a finding', outsider, id => outsider().get(`/api/v1/findings/${id()}`), () => finding],
    ['PATCH a finding', outsider, id => outsider().patch(`/api/v1/findings/${id()}`, { version: 1, title: 'x' }), () => finding],
    ['comment on a finding', outsider, id => outsider().post(`/api/v1/findings/${id()}/comments`, { body: 'x' }), () => finding],
    ['add a fix to a finding', outsider, id => outsider().post(`/api/v1/findings/${id()}/fixes`, { description: 'x' }), () => finding],
    ['move a finding with a rig token of another build', rig, id => rig().post(`/api/v1/findings/${id()}/move`, { lane: 'traced', version: 1 }), () => finding],
    ['move a finding as another team’s member', outsider, id => outsider().post(`/api/v1/findings/${id()}/move`, { lane: 'traced', version: 1 }), () => finding],
    ['GET a file', outsider, id => outsider().get(`/api/v1/files/${id()}`), () => file],
    ['GET a file with a rig token of another build', rig, id => rig().get(`/api/v1/files/${id()}`), () => file],
    ['DELETE a file', outsider, id => outsider().delete(`/api/v1/files/${id()}`), () => file],
    ['DELETE a reading of another build through one’s own', outsider, id => outsider().delete(`/api/v1/builds/${w.foreignBuild.slug}/readings/${id()}`), () => reading],
    ['DELETE a token of another build through one’s own', outsider, id => outsider().delete(`/api/builds/${w.foreignBuild.slug}/tokens/${id()}`), () => token],
    ['resend an invitation of another team through one’s own', outsider, id => outsider().post(`/api/teams/${w.outsider.team.slug}/invitations/${id()}/resend`), () => invitation],
    ['DELETE an invitation of another team through one’s own', outsider, id => outsider().delete(`/api/teams/${w.outsider.team.slug}/invitations/${id()}`), () => invitation],
  ]

  it.each(cases)('%s: the same 404 as a random id', async (_name, _who, call, hidden) => {
    const theirs = await call(hidden)
    const random = await call(() => randomUUID())
    same(theirs, random)
  })

  it('a fix of a finding one can’t see, through one’s own finding: the same 404 as a random id', async () => {
    const mine = (await w.outsider.client.post(`/api/v1/builds/${w.foreignBuild.slug}/findings`, { title: 'Own finding', severity: 'degrades' })).body.id
    const theirs = await w.outsider.client.patch(`/api/v1/findings/${mine}/fixes/${fix}`, { state: 'in-progress' })
    const random = await w.outsider.client.patch(`/api/v1/findings/${mine}/fixes/${randomUUID()}`, { state: 'in-progress' })
    same(theirs, random)
  })
})
