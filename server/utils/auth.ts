import { randomUUID } from 'node:crypto'
import type { H3Event } from 'h3'
import type { Knex } from 'knex'
import type { Role } from '#shared/utils/roles'
import { ROLE_LABELS, roleAtLeast } from '#shared/utils/roles'
import type { BuildRow, FileRow, FindingRow } from '../db/tables'
import type { Actor } from './audit'

// Authentication and authorization for handlers: who is signed in, their role in a team or a
// build (with the Actor that domain functions take), rig tokens, and the sign-in throttle.

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
  const session = await signedInSession(event)
  // a session signed out of (revoked_sessions) has ended too, whatever its cookie says
  const [row] = await prepared<SessionRow>(useDb(), 'SELECT id, name, email, session_version, EXISTS (SELECT 1 FROM revoked_sessions WHERE sid = $2) AS revoked FROM users WHERE id = $1', [session.user.id, sessionId(session)])
  return await acceptSession(event, session, row)
}

type SignedIn = Awaited<ReturnType<typeof getUserSession>> & { user: { id: string } }
interface SessionRow { id: string, name: string, email: string, session_version: number, revoked: boolean }

async function signedInSession(event: H3Event): Promise<SignedIn> {
  const session = await getUserSession(event)
  if (!session.user) throw createError({ statusCode: 401, message: 'Sign in first' })
  return session as SignedIn
}

/** The user the session row shows, or 401 (and the cookie cleared) when the session has ended. */
async function acceptSession(event: H3Event, session: SignedIn, row: SessionRow | undefined): Promise<SessionUser> {
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
  /** the caller, for domain functions */
  actor: Actor
}

/** A signed-in person as an Actor with `role`. */
export function userActor(event: H3Event, user: SessionUser, role: Role | null): Actor {
  return { userId: user.id, rigTokenId: null, name: user.name, label: user.email, role, origin: originOf(event) }
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
  return { user, team, role, actor: userActor(event, user, role) }
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
  /** the caller, for domain functions */
  actor: Actor
  /**
   * The data stamps (data_stamps) of the build's team and of the signed-in person, read in the same
   * statement as the access: they change whenever anything shown under them does, so an answer
   * computed at these stamps can be kept and served again while they hold (server/utils/serving/keptAnswers.ts).
   * Null where the look-up didn't read them.
   */
  stamps: { team: string, user: string | null } | null
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
    const found = await byIdOrSlug(db('builds').where('builds.id', token.build_id), 'builds', buildKey).first('builds.*', db.raw(TEAM_STAMP)) as (BuildRow & Stamped) | undefined
    if (!found) throw createError({ statusCode: 404, message: 'Build not found' })
    if (!roleAtLeast('engineer', min)) refuse('engineer', min)
    const { _stamp, _user_stamp, ...build } = found
    const label = `rig token ${token.name}`
    const actor: Actor = { userId: null, rigTokenId: token.id, name: label, label, role: 'engineer', origin: originOf(event) }
    return { build, role: 'engineer', user: null, rigTokenId: token.id, actorId: null, actorLabel: label, actor, stamps: stampsOf(_stamp, null) }
  }
  const { user, row } = event.context.user ? { user: event.context.user as SessionUser, row: await memberBuild(db, (event.context.user as SessionUser).id, buildKey) } : await userAndBuild(event, buildKey)
  if (!row) throw createError({ statusCode: 404, message: 'Build not found' })
  const { member_role: role, _stamp, _user_stamp, ...build } = row
  if (!roleAtLeast(role, min)) refuse(role, min)
  return { build, role, user, rigTokenId: null, actorId: user.id, actorLabel: user.email, actor: userActor(event, user, role), stamps: stampsOf(_stamp, _user_stamp) }
}

interface Stamped { _stamp?: string | null, _user_stamp?: string | null }
type MemberBuild = BuildRow & { member_role: Role } & Stamped

// a team that has no stamp row yet has never been written since stamps began: '0' stands for it
const TEAM_STAMP = `(SELECT n FROM data_stamps WHERE scope = builds.team_id) AS _stamp`

function stampsOf(team: string | null | undefined, user: string | null | undefined): BuildAccess['stamps'] {
  return { team: team ?? '0', user: user ?? null }
}

/** The build (by id or slug) if `userId` is a member of its team, with their role. */
async function memberBuild(db: Knex, userId: string, buildKey: string): Promise<MemberBuild | undefined> {
  return await byIdOrSlug(db('builds')
    .join('memberships', 'memberships.team_id', 'builds.team_id')
    .where('memberships.user_id', userId), 'builds', buildKey)
    .first('builds.*', 'memberships.role as member_role', db.raw(TEAM_STAMP), db.raw('(SELECT n FROM data_stamps WHERE scope = ?) AS _user_stamp', [userId])) as MemberBuild | undefined
}

// the session's check and the build with the member's role, in one round trip: every build route starts here
const USER_AND_BUILD = `SELECT u.id AS _user_id, u.name AS _user_name, u.email AS _user_email, u.session_version AS _session_version,
  EXISTS (SELECT 1 FROM revoked_sessions WHERE sid = $2) AS _revoked, x.*,
  (SELECT n FROM data_stamps WHERE scope = x.team_id) AS _stamp, (SELECT n FROM data_stamps WHERE scope = u.id) AS _user_stamp
  FROM users u
  LEFT JOIN LATERAL (SELECT b.*, m.role AS member_role FROM builds b JOIN memberships m ON m.team_id = b.team_id AND m.user_id = u.id
    WHERE b.id = $3::uuid OR b.slug = $4 LIMIT 1) x ON true
  WHERE u.id = $1`

type UserAndBuildRow = { _user_id: string, _user_name: string, _user_email: string, _session_version: number, _revoked: boolean } & (MemberBuild | { [K in keyof MemberBuild]: null })

/** requireUser and memberBuild in one statement. */
async function userAndBuild(event: H3Event, buildKey: string): Promise<{ user: SessionUser, row: MemberBuild | undefined }> {
  const session = await signedInSession(event)
  const uuid = UUID.test(buildKey) ? buildKey : null
  // a key no slug can be (NUL, too long) matches nothing, rather than upsetting the database
  const slug = !uuid && buildKey.length <= 200 && !buildKey.includes('\0') ? buildKey.toLowerCase() : null
  const [found] = await prepared<UserAndBuildRow>(useDb(), USER_AND_BUILD, [session.user.id, sessionId(session), uuid, slug])
  if (!found) return { user: await acceptSession(event, session, undefined), row: undefined }
  const { _user_id: id, _user_name: name, _user_email: email, _session_version: version, _revoked: revoked, ...build } = found
  const user = await acceptSession(event, session, { id, name, email, session_version: version, revoked })
  return { user, row: build.id === null ? undefined : build as MemberBuild }
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
  return row
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

/** Routes that act on a team or many builds don't take a rig token: it belongs to one build. */
export function refuseRigToken(event: H3Event) {
  if (bearerToken(event)) {
    throw createError({ statusCode: 403, message: 'A rig token acts on its own build only; use its build routes' })
  }
}

/** 429 with Retry-After while the sign-in throttle (access/throttle.ts) holds the address or IP. */
export async function assertNotThrottled(event: H3Event, email: string, ip: string) {
  const retry = await signInWait(useDb(), email, ip)
  if (retry !== null) {
    setResponseHeader(event, 'Retry-After', retry)
    throw createError({ statusCode: 429, message: `Too many failed sign-ins; try again in ${Math.ceil(retry / 60)} min` })
  }
}

export interface FindingAccess extends BuildAccess {
  findingId: string
  /** the finding as it was when the request came in (writes lock it, or check its version as they write) */
  finding: FindingRow
}

/**
 * The caller's access to a finding's build. Signed-out callers get a 401 before anything is looked
 * up; a finding outside the caller's teams is a 404; a role too low a 403 (requireBuildRole's).
 */
const findingNotFound = () => createError({ statusCode: 404, message: 'Finding not found' })

/** A finding in a build the caller can't see reads as one that doesn't exist: same status, same words. */
async function asFindingNotFound<T>(access: Promise<T>): Promise<T> {
  try {
    return await access
  }
  catch (err) {
    throw (err as { statusCode?: number }).statusCode === 404 ? findingNotFound() : err
  }
}

export async function requireFindingRole(event: H3Event, min: Role, opts: { allowRigToken?: boolean } = {}): Promise<FindingAccess> {
  const id = uuidParam(event, 'id')
  const db = useDb()
  if (opts.allowRigToken && bearerToken(event)) {
    const finding = await db('findings').where({ id }).first()
    if (!finding) throw findingNotFound()
    return { ...await asFindingNotFound(requireBuildRole(event, finding.build_id, min, opts)), findingId: id, finding }
  }
  // the session's check, and the finding with its build and the caller's role there, side by side
  const session = await getUserSession(event)
  const [user, row] = await Promise.all([
    requireUser(event),
    session.user
      ? prepared<FindingRow & { build: BuildRow, member_role: Role | null }>(db, `
          SELECT f.*, to_jsonb(b) AS build, m.role AS member_role FROM findings f JOIN builds b ON b.id = f.build_id
          LEFT JOIN memberships m ON m.team_id = b.team_id AND m.user_id = $1 WHERE f.id = $2`, [session.user.id, id]).then(rows => rows[0])
      : null,
  ])
  if (!row) throw findingNotFound()
  const { build, member_role: role, ...finding } = row
  // outside the team or below the role: the usual 404 or 403, worded by requireBuildRole
  if (!roleAtLeast(role, min)) return { ...await asFindingNotFound(requireBuildRole(event, build.id, min)), findingId: id, finding }
  return { build, role: role!, user, rigTokenId: null, actorId: user.id, actorLabel: user.email, actor: userActor(event, user, role!), findingId: id, finding, stamps: null }
}

/**
 * A file and the caller's access to its build, for reading it. The caller is authenticated
 * before the file is looked up, and a file outside their teams is a 404 like a missing one.
 */
export async function fileForReader(event: H3Event, id: string, opts: { allowRigToken: boolean }): Promise<{ file: FileRow, access: BuildAccess }> {
  const bearer = opts.allowRigToken ? bearerToken(event) : null
  if (bearer) await useRigToken(event, bearer)
  else await requireUser(event)
  const file = await useDb()('files').where({ id }).first()
  const notFound = () => createError({ statusCode: 404, message: 'File not found' })
  if (!file) throw notFound()
  try {
    return { file, access: await requireBuildRole(event, file.build_id, 'reviewer', opts) }
  }
  catch (err) {
    throw (err as { statusCode?: number })?.statusCode === 404 ? notFound() : err
  }
}
