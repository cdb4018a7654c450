import { createHash, randomBytes } from 'node:crypto'
import { addMember, Client, signUp, testDb, uniqueEmail, type World } from './api'
import { unsubscribeQuery } from './unsubscribe'
import { freshUpload, importBody, matrixCsv, matrixFile, uploadForm } from './files'

export const ACTORS = ['anon', 'foreignRig', 'outsider', 'reviewer', 'engineer', 'owner'] as const
export type Actor = typeof ACTORS[number]

export interface Prepared {
  params?: Record<string, string>
  /** the session cookie to call with, in place of the actor's own (for calls that end sessions) */
  cookie?: string
  body?: unknown
  query?: string
}

export interface RouteCase {
  method: 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE'
  /** the route as the server/api tree names it, with :params */
  path: string
  /** expected status: anonymous, a rig token of another team's build, a member of another team, then this team's roles */
  expect: Record<Actor, number>
  /** params and body for one call by `actor`; called afresh for every call */
  prepare?: (w: World, actor: Actor) => Promise<Prepared> | Prepared
}

/** expectation shorthand, in the order of ACTORS */
export function e(anon: number, foreignRig: number, outsider: number, reviewer: number, engineer: number, owner: number): Record<Actor, number> {
  return { anon, foreignRig, outsider, reviewer, engineer, owner }
}

const base = (w: World): Record<string, string> => ({ team: w.team.slug, build: w.build.slug })

export function hashed(token: string) {
  return createHash('sha256').update(token).digest('hex')
}

/** A member who can be changed or removed by the call (so every call finds one). */
async function spareMember(w: World) {
  const p = await signUp({ name: 'Spare Member' })
  await addMember(w.team.id, p.user.id, 'engineer')
  return p.user.id
}

async function pendingInvitation(w: World, email = uniqueEmail('invitee'), teamId = w.team.id) {
  const token = randomBytes(24).toString('base64url')
  const [row] = await testDb()('invitations').insert({
    team_id: teamId,
    email,
    role: 'engineer',
    token_hash: hashed(token),
    invited_by: w.owner.user.id,
    expires_at: testDb().raw(`now() + interval '7 days'`),
  }).returning('id')
  return { id: row.id as string, token }
}

/** Invitations that the matrix accepts go to a team of their own, so the world stays as it was. */
async function scratchTeam(w: World) {
  const [t] = await testDb()('teams').insert({ name: 'Scratch', slug: `scratch-${randomBytes(5).toString('hex')}` }).returning('id')
  await addMember(t.id, w.owner.user.id, 'owner')
  return t.id as string
}

function actorEmail(w: World, actor: Actor) {
  return actor === 'anon' || actor === 'foreignRig' ? uniqueEmail('nobody') : w[actor].email
}

/** One target and one open revision per world, for the routes that only read or add to them. */
const measured = new WeakMap<World, Promise<{ key: string, label: string }>>()
function measuredBuild(w: World) {
  if (!measured.has(w)) {
    measured.set(w, (async () => {
      const key = `matrix_${randomBytes(4).toString('hex')}`
      const label = `M${randomBytes(4).toString('hex')}`
      const t = await w.owner.client.post(`/api/v1/builds/${w.build.slug}/targets`, { key, name: 'Matrix target', unit: 'N', comparator: 'atLeast', threshold: 10 })
      const r = await w.owner.client.post(`/api/v1/builds/${w.build.slug}/revisions`, { label })
      if (t.status !== 201 || r.status !== 201) throw new Error(`matrix fixtures: ${t.status} ${r.status}`)
      return { key, label }
    })())
  }
  return measured.get(w)!
}

/** An archive of the world's build (exported by its Owner), as an import's multipart form. */
async function archiveForm(w: World): Promise<FormData> {
  const res = await fetch(`${w.owner.client.base}/api/v1/builds/${w.build.slug}/export`, { headers: { cookie: w.owner.client.cookie } })
  if (res.status !== 200) throw new Error(`matrix archive: ${res.status}`)
  const form = new FormData()
  form.append('file', new Blob([await res.arrayBuffer()], { type: 'application/gzip' }), 'matrix.tar.gz')
  return form
}

/** A new revision of the world's build, frozen by the Owner when asked. */
async function freshRevision(w: World, frozen = false) {
  const label = `F${randomBytes(4).toString('hex')}`
  const r = await w.owner.client.post(`/api/v1/builds/${w.build.slug}/revisions`, { label })
  if (r.status !== 201) throw new Error(`matrix revision: ${r.status}`)
  if (frozen) await w.owner.client.post(`/api/v1/builds/${w.build.slug}/revisions/${label}/freeze`)
  return label
}

/** A target with a design model over a parameter of one revision, per world (issue 15). */
const designed = new WeakMap<World, Promise<{ key: string, label: string }>>()
function designBuild(w: World) {
  if (!designed.has(w)) {
    designed.set(w, (async () => {
      const key = `design_${randomBytes(4).toString('hex')}`
      const label = `D${randomBytes(4).toString('hex')}`
      const r = await w.owner.client.post(`/api/v1/builds/${w.build.slug}/revisions`, { label, parameters: [{ key: 'pull_force', value: 2, unit: 'N', tolerance: 0.1 }] })
      const t = await w.owner.client.post(`/api/v1/builds/${w.build.slug}/targets`, { key, name: 'Designed pull', unit: 'N', comparator: 'atLeast', threshold: 10, model: 'pull_force * 6' })
      if (t.status !== 201 || r.status !== 201) throw new Error(`matrix design fixtures: ${t.status} ${r.status}`)
      return { key, label }
    })())
  }
  return designed.get(w)!
}

// ---- findings (issue 6) ----
/** A new finding on the world's build: each call gets its own, at version 1. */
async function freshFinding(w: World) {
  const r = await w.owner.client.post(`/api/v1/builds/${w.build.slug}/findings`, { title: 'Matrix finding', severity: 'degrades' })
  if (r.status !== 201) throw new Error(`matrix finding: ${r.status} ${JSON.stringify(r.body)}`)
  return r.body.id as string
}

/** A new finding with one fix; returns both ids. */
async function freshFix(w: World) {
  const id = await freshFinding(w)
  const r = await w.owner.client.post(`/api/v1/findings/${id}/fixes`, { description: 'Matrix fix' })
  if (r.status !== 201) throw new Error(`matrix fix: ${r.status} ${JSON.stringify(r.body)}`)
  return { id, fixId: r.body.id as string }
}

/** A second session of the actor's user, for a call that ends it (the world's own stays live). */
async function freshSession(w: World, actor: Actor): Promise<Prepared> {
  if (actor === 'anon' || actor === 'foreignRig') return {}
  const c = new Client()
  const r = await c.post('/api/auth/login', { email: w[actor].email, password: w[actor].password })
  if (r.status !== 200) throw new Error(`could not sign ${actor} in again: ${r.status}`)
  return { cookie: c.cookie }
}

/** A session of a person of their own, for a call that ends all of a user's sessions. */
async function throwawaySession(actor: Actor): Promise<Prepared> {
  if (actor === 'anon' || actor === 'foreignRig') return {}
  return { cookie: (await signUp({ name: 'Throwaway Person' })).client.cookie }
}

export const routes: RouteCase[] = [
  { method: 'GET', path: '/api/health', expect: e(200, 200, 200, 200, 200, 200) },

  // accounts
  { method: 'POST', path: '/api/auth/signup', expect: e(201, 201, 201, 201, 201, 201), prepare: () => ({ body: { name: 'New Person', email: uniqueEmail('signup'), password: 'torque-wrench-5501' } }) },
  { method: 'POST', path: '/api/auth/login', expect: e(200, 200, 200, 200, 200, 200), prepare: w => ({ body: { email: w.engineer.email, password: w.engineer.password } }) },
  { method: 'POST', path: '/api/auth/logout', expect: e(200, 200, 200, 200, 200, 200), prepare: (w, a) => freshSession(w, a) },
  { method: 'POST', path: '/api/auth/forgot', expect: e(200, 200, 200, 200, 200, 200), prepare: () => ({ body: { email: uniqueEmail('forgot') } }) },
  { method: 'POST', path: '/api/auth/reset', expect: e(400, 400, 400, 400, 400, 400), prepare: () => ({ body: { token: 'no-such-token-000000', password: 'torque-wrench-5501' } }) },
  { method: 'GET', path: '/api/account', expect: e(401, 401, 200, 200, 200, 200) },
  { method: 'PATCH', path: '/api/account', expect: e(401, 401, 200, 200, 200, 200), prepare: (w, a) => ({ body: { name: a === 'anon' || a === 'foreignRig' ? 'x' : w[a].user.name } }) },
  { method: 'POST', path: '/api/account/sign-out-everywhere', expect: e(401, 401, 200, 200, 200, 200), prepare: (_w, a) => throwawaySession(a) },
  { method: 'POST', path: '/api/account/password', expect: e(401, 401, 400, 400, 400, 400), prepare: () => ({ body: { currentPassword: 'not-the-password', newPassword: 'torque-wrench-5501' } }) },

  // teams and members
  { method: 'POST', path: '/api/v1/teams', expect: e(401, 403, 201, 201, 201, 201), prepare: () => ({ body: { name: 'Another team' } }) },
  { method: 'GET', path: '/api/teams/:team', expect: e(401, 401, 404, 200, 200, 200) },
  { method: 'PATCH', path: '/api/teams/:team', expect: e(401, 401, 404, 403, 403, 200), prepare: w => ({ params: base(w), body: { name: 'Matrix team' } }) },
  { method: 'GET', path: '/api/teams/:team/members', expect: e(401, 401, 404, 200, 200, 200) },
  { method: 'PATCH', path: '/api/teams/:team/members/:userId', expect: e(401, 401, 404, 403, 403, 200), prepare: async w => ({ params: { ...base(w), userId: await spareMember(w) }, body: { role: 'reviewer' } }) },
  { method: 'DELETE', path: '/api/teams/:team/members/:userId', expect: e(401, 401, 404, 403, 403, 204), prepare: async w => ({ params: { ...base(w), userId: await spareMember(w) } }) },
  { method: 'GET', path: '/api/teams/:team/builds', expect: e(401, 401, 404, 200, 200, 200) },
  { method: 'GET', path: '/api/teams/:team/audit', expect: e(401, 401, 404, 403, 403, 200) },
  { method: 'POST', path: '/api/teams/:team/test-mail', expect: e(401, 401, 404, 403, 403, 200) },

  // invitations
  { method: 'GET', path: '/api/teams/:team/invitations', expect: e(401, 401, 404, 403, 403, 200) },
  { method: 'POST', path: '/api/teams/:team/invitations', expect: e(401, 401, 404, 403, 403, 201), prepare: w => ({ params: base(w), body: { email: uniqueEmail('invite'), role: 'reviewer' } }) },
  { method: 'POST', path: '/api/teams/:team/invitations/:id/resend', expect: e(401, 401, 404, 403, 403, 200), prepare: async w => ({ params: { ...base(w), id: (await pendingInvitation(w)).id } }) },
  { method: 'DELETE', path: '/api/teams/:team/invitations/:id', expect: e(401, 401, 404, 403, 403, 204), prepare: async w => ({ params: { ...base(w), id: (await pendingInvitation(w)).id } }) },
  { method: 'GET', path: '/api/invitations/:token', expect: e(200, 200, 200, 200, 200, 200), prepare: async w => ({ params: { token: (await pendingInvitation(w)).token } }) },
  { method: 'POST', path: '/api/invitations/:token/accept', expect: e(401, 401, 200, 200, 200, 200), prepare: async (w, a) => ({ params: { token: (await pendingInvitation(w, actorEmail(w, a), await scratchTeam(w))).token } }) },

  // builds and rig tokens
  { method: 'GET', path: '/api/builds/:build/tokens', expect: e(401, 401, 404, 403, 200, 200) },
  { method: 'POST', path: '/api/builds/:build/tokens', expect: e(401, 401, 404, 403, 201, 201), prepare: w => ({ params: base(w), body: { name: 'matrix rig' } }) },
  {
    method: 'DELETE',
    path: '/api/builds/:build/tokens/:id',
    expect: e(401, 401, 404, 403, 204, 204),
    prepare: async (w) => {
      const [row] = await testDb()('rig_tokens').insert({ build_id: w.build.id, name: 'spare', prefix: 'rig_spare', token_hash: hashed(randomBytes(16).toString('hex')) }).returning('id')
      return { params: { ...base(w), id: row.id } }
    },
  },

  // API v1
  { method: 'GET', path: '/api/v1/teams', expect: e(401, 403, 200, 200, 200, 200) },
  { method: 'GET', path: '/api/v1/builds', expect: e(401, 200, 200, 200, 200, 200) },
  { method: 'POST', path: '/api/v1/builds', expect: e(401, 403, 404, 403, 201, 201), prepare: w => ({ body: { team: w.team.slug, name: 'Matrix build' } }) },
  { method: 'GET', path: '/api/v1/builds/:build', expect: e(401, 404, 404, 200, 200, 200) },

  // builds, targets, revisions, readings and the scoreboard
  { method: 'GET', path: '/api/units', expect: e(200, 200, 200, 200, 200, 200), prepare: () => ({ query: 'quantity=torque' }) },
  { method: 'GET', path: '/api/units/check', expect: e(200, 200, 200, 200, 200, 200), prepare: () => ({ query: 'unit=lbf%2Fin&to=N%2Fmm' }) },
  { method: 'GET', path: '/api/v1/openapi.json', expect: e(200, 200, 200, 200, 200, 200) },
  { method: 'GET', path: '/api/v1/docs', expect: e(200, 200, 200, 200, 200, 200) },
  { method: 'GET', path: '/api/v1/docs/:file', expect: e(200, 200, 200, 200, 200, 200), prepare: () => ({ params: { file: 'init.js' } }) },
  { method: 'PATCH', path: '/api/v1/builds/:build', expect: e(401, 403, 404, 403, 200, 200), prepare: w => ({ params: base(w), body: { summary: 'Matrix summary' } }) },
  { method: 'GET', path: '/api/v1/builds/:build/targets/:key', expect: e(401, 404, 404, 200, 200, 200), prepare: async w => ({ params: { ...base(w), key: (await measuredBuild(w)).key } }) },
  { method: 'PATCH', path: '/api/v1/builds/:build/targets/:key', expect: e(401, 404, 404, 403, 200, 200), prepare: async w => ({ params: { ...base(w), key: (await measuredBuild(w)).key }, body: { name: 'Matrix target' } }) },
  {
    method: 'POST',
    path: '/api/v1/builds/:build/targets/order',
    expect: e(401, 404, 404, 403, 200, 200),
    prepare: async (w) => {
      await measuredBuild(w)
      const list = await w.owner.client.get(`/api/v1/builds/${w.build.slug}/targets`)
      return { params: base(w), body: { keys: (list.body as { key: string }[]).map(t => t.key).reverse() } }
    },
  },
  { method: 'GET', path: '/api/v1/builds/:build/revisions', expect: e(401, 404, 404, 200, 200, 200) },
  { method: 'GET', path: '/api/v1/builds/:build/revisions/:label', expect: e(401, 404, 404, 200, 200, 200), prepare: async w => ({ params: { ...base(w), label: (await measuredBuild(w)).label } }) },
  { method: 'PATCH', path: '/api/v1/builds/:build/revisions/:label', expect: e(401, 404, 404, 403, 200, 200), prepare: async w => ({ params: { ...base(w), label: await freshRevision(w) }, body: { summary: 'Edited' } }) },
  { method: 'POST', path: '/api/v1/builds/:build/revisions/:label/freeze', expect: e(401, 403, 404, 200, 403, 200), prepare: async w => ({ params: { ...base(w), label: await freshRevision(w) } }) },
  { method: 'POST', path: '/api/v1/builds/:build/revisions/:label/unfreeze', expect: e(401, 403, 404, 403, 403, 200), prepare: async w => ({ params: { ...base(w), label: await freshRevision(w, true) }, body: { reason: 'Matrix: reading taken with the wrong probe' } }) },
  {
    method: 'DELETE',
    path: '/api/v1/builds/:build/readings/:id',
    expect: e(401, 403, 404, 403, 204, 204),
    prepare: async (w) => {
      const { key, label } = await measuredBuild(w)
      const r = await w.owner.client.post(`/api/v1/builds/${w.build.slug}/readings`, { revision: label, target: key, values: [12, 13], unit: 'N' })
      if (r.status !== 201) throw new Error(`matrix reading: ${r.status}`)
      return { params: { ...base(w), id: r.body.reading.id } }
    },
  },
  { method: 'POST', path: '/api/v1/builds/:build/targets', expect: e(401, 404, 404, 403, 201, 201), prepare: () => ({ body: { key: `m_${randomBytes(4).toString('hex')}`, name: 'Matrix target', unit: 'kg', comparator: 'atMost', threshold: 2 } }) },
  { method: 'GET', path: '/api/v1/builds/:build/targets', expect: e(401, 404, 404, 200, 200, 200) },
  { method: 'POST', path: '/api/v1/builds/:build/revisions', expect: e(401, 404, 404, 403, 201, 201), prepare: () => ({ body: { label: `V${randomBytes(4).toString('hex')}` } }) },
  { method: 'POST', path: '/api/v1/builds/:build/readings', expect: e(401, 404, 404, 403, 201, 201), prepare: async (w) => { const { key, label } = await measuredBuild(w); return { body: { revision: label, target: key, values: [11, 12, 13], unit: 'N' } } } },
  { method: 'GET', path: '/api/v1/builds/:build/scoreboard', expect: e(401, 404, 404, 200, 200, 200) },

  // history, comparison and derived targets (issue 5)
  {
    method: 'GET',
    path: '/api/v1/builds/:build/compare',
    expect: e(401, 404, 404, 200, 200, 200),
    prepare: async (w) => {
      const { label } = await measuredBuild(w)
      return { params: base(w), query: `a=${label}&b=${await freshRevision(w)}` }
    },
  },

  // design math beside the measurement (issue 15)
  { method: 'GET', path: '/api/v1/builds/:build/targets/:key/design', expect: e(401, 404, 404, 200, 200, 200), prepare: async w => ({ params: { ...base(w), key: (await designBuild(w)).key } }) },
  { method: 'POST', path: '/api/v1/builds/:build/targets/:key/solve', expect: e(401, 404, 404, 200, 200, 200), prepare: async w => ({ params: { ...base(w), key: (await designBuild(w)).key }, body: { parameter: 'pull_force' } }) },
  {
    method: 'GET',
    path: '/api/v1/builds/:build/targets/:key/plan',
    expect: e(401, 404, 404, 200, 200, 200),
    prepare: async (w) => {
      const { key, label } = await designBuild(w)
      return { params: { ...base(w), key }, query: `revision=${label}` }
    },
  },

  // digests (issue 8)
  { method: 'PUT', path: '/api/v1/builds/:build/subscription', expect: e(401, 403, 404, 200, 200, 200), prepare: w => ({ params: base(w), body: { frequency: 'daily' } }) },
  { method: 'GET', path: '/api/v1/builds/:build/events', expect: e(401, 404, 404, 200, 200, 200) },
  { method: 'GET', path: '/api/v1/builds/:build/subscription', expect: e(401, 403, 404, 200, 200, 200) },
  { method: 'GET', path: '/api/builds/:build/digest/preview', expect: e(401, 401, 404, 200, 200, 200) },
  { method: 'POST', path: '/api/builds/:build/digest/send', expect: e(401, 401, 404, 403, 403, 200) },
  { method: 'GET', path: '/api/me/subscriptions', expect: e(401, 401, 200, 200, 200, 200) },
  {
    method: 'POST',
    path: '/api/unsubscribe',
    // public: the signed link is the permission
    expect: e(200, 200, 200, 200, 200, 200),
    prepare: w => ({ query: unsubscribeQuery(w.reviewer.user.id, w.build.id) }),
  },

  // findings, fixes and comments (issue 6)
  { method: 'GET', path: '/api/v1/builds/:build/findings', expect: e(401, 404, 404, 200, 200, 200), prepare: w => ({ params: base(w), query: 'lane=spotted' }) },
  { method: 'POST', path: '/api/v1/builds/:build/findings', expect: e(401, 404, 404, 403, 201, 201), prepare: w => ({ params: base(w), body: { title: 'Matrix: connector warm after the climb', severity: 'degrades' } }) },
  { method: 'POST', path: '/api/v1/findings/:id/move', expect: e(401, 404, 404, 403, 200, 200), prepare: async w => ({ params: { id: await freshFinding(w) }, body: { lane: 'traced', version: 1 } }) },
  { method: 'GET', path: '/api/v1/builds/:build/findings/board', expect: e(401, 404, 404, 200, 200, 200) },
  { method: 'GET', path: '/api/v1/builds/:build/findings/open', expect: e(401, 404, 404, 200, 200, 200) },
  { method: 'GET', path: '/api/v1/findings/:id', expect: e(401, 404, 404, 200, 200, 200), prepare: async w => ({ params: { id: await freshFinding(w) } }) },
  { method: 'PATCH', path: '/api/v1/findings/:id', expect: e(401, 404, 404, 403, 200, 200), prepare: async w => ({ params: { id: await freshFinding(w) }, body: { version: 1, title: 'Matrix: edited' } }) },
  { method: 'POST', path: '/api/v1/findings/:id/fixes', expect: e(401, 403, 404, 403, 201, 201), prepare: async w => ({ params: { id: await freshFinding(w) }, body: { description: 'Matrix: thicker lugs', ownerId: w.engineer.user.id, dueOn: '2027-01-15' } }) },
  { method: 'PATCH', path: '/api/v1/findings/:id/fixes/:fixId', expect: e(401, 403, 404, 403, 200, 200), prepare: async w => ({ params: await freshFix(w), body: { state: 'in-progress' } }) },
  // Reviewers comment; they don't create, edit or move
  { method: 'POST', path: '/api/v1/findings/:id/comments', expect: e(401, 403, 404, 201, 201, 201), prepare: async w => ({ params: { id: await freshFinding(w) }, body: { body: 'Matrix: seen again on the dyno' } }) },
  { method: 'GET', path: '/api/me/fixes', expect: e(401, 401, 200, 200, 200, 200) },

  // evidence files, CSV import and export (issue 7)
  { method: 'POST', path: '/api/v1/builds/:build/files', expect: e(401, 404, 404, 403, 201, 201), prepare: w => ({ params: base(w), body: uploadForm('matrix-notes.txt', 'dyno notes\n') }) },
  { method: 'GET', path: '/api/v1/files/:id', expect: e(401, 404, 404, 200, 200, 200), prepare: async w => ({ params: { id: await matrixFile(w) } }) },
  { method: 'GET', path: '/api/v1/builds/:build/files', expect: e(401, 404, 404, 200, 200, 200) },
  // the uploader (the Engineer) or an Owner
  { method: 'DELETE', path: '/api/v1/files/:id', expect: e(401, 403, 404, 403, 204, 204), prepare: async w => ({ params: { id: await freshUpload(w) } }) },
  { method: 'GET', path: '/api/teams/:team/storage', expect: e(401, 401, 404, 200, 200, 200) },
  { method: 'GET', path: '/api/v1/builds/:build/import/preview', expect: e(401, 404, 404, 403, 200, 200), prepare: async w => ({ params: base(w), query: `file=${await matrixCsv(w)}` }) },
  { method: 'POST', path: '/api/v1/builds/:build/import', expect: e(401, 404, 404, 403, 201, 201), prepare: async w => ({ params: base(w), body: await importBody(w) }) },
  { method: 'GET', path: '/api/v1/builds/:build/export/readings.csv', expect: e(401, 404, 404, 200, 200, 200) },
  { method: 'GET', path: '/api/v1/builds/:build/export/scoreboard.csv', expect: e(401, 404, 404, 200, 200, 200) },
  // build archives out and in
  { method: 'GET', path: '/api/v1/builds/:build/export', expect: e(401, 403, 404, 403, 200, 200) },
  { method: 'POST', path: '/api/v1/teams/:team/import', expect: e(401, 403, 404, 403, 201, 201), prepare: async w => ({ params: base(w), body: await archiveForm(w) }) },
]
