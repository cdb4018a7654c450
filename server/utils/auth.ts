import { randomUUID } from 'node:crypto'
import type { H3Event } from 'h3'
import type { Knex } from 'knex'
import type { Role } from '#shared/utils/roles'
import { ROLE_LABELS, roleAtLeast } from '#shared/utils/roles'

export interface SessionUser { id: string, name: string, email: string }

/** The client's address; X-Forwarded-For only when the app is told it sits behind a proxy. */
export function clientIp(event: H3Event): string {
  if (useRuntimeConfig().auth.trustProxy) {
    const fwd = getRequestHeader(event, 'x-forwarded-for')
    if (fwd) return fwd.split(',')[0]!.trim().slice(0, 64)
  }
  return (event.node.req.socket.remoteAddress ?? 'unknown').slice(0, 64)
}

/**
 * The signed-in user, checked against the database: a session whose user is gone, or whose
 * password was reset since it began, is ended here.
 */
export async function requireUser(event: H3Event): Promise<SessionUser> {
  if (event.context.user) return event.context.user as SessionUser
  const session = await getUserSession(event)
  if (!session.user) throw createError({ statusCode: 401, message: 'Sign in first' })
  // a session signed out of (revoked_sessions) has ended too, whatever its cookie says
  const [row] = await prepared<{ id: string, name: string, email: string, session_version: number, revoked: boolean }>(useDb(), 'SELECT id, name, email, session_version, EXISTS (SELECT 1 FROM revoked_sessions WHERE sid = $2) AS revoked FROM users WHERE id = $1', [session.user.id, sessionId(session)])
  if (!row || row.session_version !== session.sessionVersion || row.revoked) {
    await clearUserSession(event)
    throw createError({ statusCode: 401, message: 'Your session has ended; sign in again' })
  }
  const user = { id: row.id, name: row.name, email: row.email }
  event.context.user = user
  return user
}

export interface TeamAccess {
  user: SessionUser
  team: { id: string, name: string, slug: string, personal: boolean, demo: boolean }
  role: Role
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i

/** `id` or `slug` of a table row, for routes that accept either. */
export function byIdOrSlug(q: Knex.QueryBuilder, table: string, key: string) {
  if (UUID.test(key)) return q.where(`${table}.id`, key)
  // a key no slug can be (NUL, too long) matches nothing, rather than upsetting the database
  if (key.length > 200 || key.includes('\0')) return q.whereRaw('false')
  return q.where(`${table}.slug`, key.toLowerCase())
}

function refuse(role: Role, min: Role): never {
  throw createError({
    statusCode: 403,
    message: `This needs the ${ROLE_LABELS[min]} role; you are ${ROLE_LABELS[role] === 'Engineer' ? 'an' : 'a'} ${ROLE_LABELS[role]}`,
  })
}

/** The caller's membership of a team; 404 when they are not in it, 403 when their role is too low. */
export async function requireTeamRole(event: H3Event, teamKey: string, min: Role): Promise<TeamAccess> {
  const user = await requireUser(event)
  const row = await byIdOrSlug(useDb()('teams')
    .join('memberships', 'memberships.team_id', 'teams.id')
    .where('memberships.user_id', user.id), 'teams', teamKey)
    .first('teams.id', 'teams.name', 'teams.slug', 'teams.personal', 'teams.demo', 'memberships.role')
  if (!row) throw createError({ statusCode: 404, message: 'Team not found' })
  if (!roleAtLeast(row.role, min)) refuse(row.role, min)
  const { role, ...team } = row
  return { user, team, role }
}

export interface BuildRow {
  id: string
  team_id: string
  name: string
  slug: string
  summary: string
  archived_at: Date | null
}

export interface BuildAccess {
  build: BuildRow
  role: Role
  /** null when a rig token acts */
  user: SessionUser | null
  rigTokenId: string | null
  /** who acted, for records: the user's id, or null for a rig */
  actorId: string | null
  actorLabel: string
}

/**
 * The caller's access to a build. A rig token (Authorization: Bearer) acts with Engineer rights on
 * its own build, and only where the route allows it (API v1).
 */
export async function requireBuildRole(event: H3Event, buildKey: string, min: Role, opts: { allowRigToken?: boolean } = {}): Promise<BuildAccess> {
  const db = useDb()
  const bearer = bearerToken(event)
  if (bearer && opts.allowRigToken) {
    const token = await useRigToken(event, bearer)
    const build = await byIdOrSlug(db('builds').where('builds.id', token.build_id), 'builds', buildKey).first()
    if (!build) throw createError({ statusCode: 404, message: 'Build not found' })
    if (!roleAtLeast('engineer', min)) refuse('engineer', min)
    return { build, role: 'engineer', user: null, rigTokenId: token.id, actorId: null, actorLabel: `rig token ${token.name}` }
  }
  const user = await requireUser(event)
  const row = await byIdOrSlug(db('builds')
    .join('memberships', 'memberships.team_id', 'builds.team_id')
    .where('memberships.user_id', user.id), 'builds', buildKey)
    .first('builds.*', 'memberships.role as member_role')
  if (!row) throw createError({ statusCode: 404, message: 'Build not found' })
  const { member_role: role, ...build } = row
  if (!roleAtLeast(role, min)) refuse(role, min)
  return { build, role, user, rigTokenId: null, actorId: user.id, actorLabel: user.email }
}

export function bearerToken(event: H3Event): string | null {
  const h = getRequestHeader(event, 'authorization')
  if (!h) return null
  const m = h.match(/^Bearer\s+(\S+)$/i)
  return m ? m[1]! : null
}

/** Looks up a live rig token and records its use. */
export async function useRigToken(event: H3Event, token: string) {
  const db = useDb()
  const row = await db('rig_tokens')
    .where({ token_hash: hashToken(token) })
    .whereNull('revoked_at')
    .where(q => q.whereNull('expires_at').orWhere('expires_at', '>', db.fn.now()))
    .first('id', 'build_id', 'name')
  if (!row) throw createError({ statusCode: 401, message: 'The rig token is unknown, expired or revoked' })
  await db('rig_tokens').where({ id: row.id }).update({ last_used_at: db.fn.now(), last_used_ip: clientIp(event) })
  return row as { id: string, build_id: string, name: string }
}

/** The id that signing out revokes: the session's own (`sid`), or h3's for a cookie made before it. */
export function sessionId(session: { sid?: string, id?: string }): string {
  return session.sid || session.id || ''
}

/**
 * Starts a fresh session for the user (a new cookie: the old one is replaced). `sid` keeps the
 * id of the session being renewed (a changed name), so signing out still ends the earlier cookie.
 */
export async function startSession(event: H3Event, user: { id: string, name: string, email: string, session_version: number }, sid: string = randomUUID()) {
  await replaceUserSession(event, {
    user: { id: user.id, name: user.name, email: user.email },
    sid,
    sessionVersion: user.session_version,
    loggedInAt: Date.now(),
  })
}
