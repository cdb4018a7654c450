import { createHash, randomBytes } from 'node:crypto'
import { addMember, signUp, testDb, uniqueEmail, type World } from './api'

export const ACTORS = ['anon', 'foreignRig', 'outsider', 'reviewer', 'engineer', 'owner'] as const
export type Actor = typeof ACTORS[number]

export interface Prepared {
  params?: Record<string, string>
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

export const routes: RouteCase[] = [
  { method: 'GET', path: '/api/health', expect: e(200, 200, 200, 200, 200, 200) },

  // accounts
  { method: 'POST', path: '/api/auth/signup', expect: e(201, 201, 201, 201, 201, 201), prepare: () => ({ body: { name: 'New Person', email: uniqueEmail('signup'), password: 'torque-wrench-5501' } }) },
  { method: 'POST', path: '/api/auth/login', expect: e(200, 200, 200, 200, 200, 200), prepare: w => ({ body: { email: w.engineer.email, password: w.engineer.password } }) },
  { method: 'POST', path: '/api/auth/logout', expect: e(200, 200, 200, 200, 200, 200) },
  { method: 'POST', path: '/api/auth/forgot', expect: e(200, 200, 200, 200, 200, 200), prepare: () => ({ body: { email: uniqueEmail('forgot') } }) },
  { method: 'POST', path: '/api/auth/reset', expect: e(400, 400, 400, 400, 400, 400), prepare: () => ({ body: { token: 'no-such-token-000000', password: 'torque-wrench-5501' } }) },
  { method: 'GET', path: '/api/account', expect: e(401, 401, 200, 200, 200, 200) },
  { method: 'PATCH', path: '/api/account', expect: e(401, 401, 200, 200, 200, 200), prepare: (w, a) => ({ body: { name: a === 'anon' || a === 'foreignRig' ? 'x' : w[a].user.name } }) },
  { method: 'POST', path: '/api/account/password', expect: e(401, 401, 400, 400, 400, 400), prepare: () => ({ body: { currentPassword: 'not-the-password', newPassword: 'torque-wrench-5501' } }) },

  // teams and members
  { method: 'GET', path: '/api/teams', expect: e(401, 401, 200, 200, 200, 200) },
  { method: 'POST', path: '/api/teams', expect: e(401, 401, 201, 201, 201, 201), prepare: () => ({ body: { name: 'Another team' } }) },
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
]
