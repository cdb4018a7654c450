import { randomBytes } from 'node:crypto'
import knex, { type Knex } from 'knex'
import { BASE_URL, DATABASE_URL } from './env'

export interface ApiResponse<T = any> {
  status: number
  body: T
  headers: Headers
}

let ipCounter = 0
// a random prefix per test process (a private IPv6 range), so test files never share an address
const IP_PREFIX = `fd00::${randomBytes(2).toString('hex')}:${randomBytes(2).toString('hex')}`
/** A distinct client address per client, so the sign-in throttle of one test can't touch another. */
function nextIp(): string {
  ipCounter++
  return `${IP_PREFIX}:${ipCounter.toString(16)}`
}

/** An HTTP client with its own cookie jar, optional bearer token and client address. */
export class Client {
  cookie = ''
  bearer = ''
  /** the server it talks to */
  base = BASE_URL
  constructor(public ip: string = nextIp()) {}

  /** The same caller (cookies, token, address) talking to another server of the app. */
  at(base: string): Client {
    return Object.assign(new Client(this.ip), { cookie: this.cookie, bearer: this.bearer, base })
  }

  async request<T = any>(method: string, path: string, body?: unknown, extraHeaders: Record<string, string> = {}): Promise<ApiResponse<T>> {
    const headers: Record<string, string> = { 'x-forwarded-for': this.ip, ...extraHeaders }
    if (this.cookie) headers.cookie = this.cookie
    if (this.bearer) headers.authorization = `Bearer ${this.bearer}`
    let payload: BodyInit | undefined
    if (body instanceof FormData || typeof body === 'string') payload = body as BodyInit
    else if (body !== undefined) {
      headers['content-type'] = 'application/json'
      payload = JSON.stringify(body)
    }
    const res = await fetch(`${this.base}${path}`, { method, headers, body: payload, redirect: 'manual' })
    const setCookie = res.headers.getSetCookie()
    for (const c of setCookie) {
      const [pair] = c.split(';')
      const [name, value] = pair!.split('=')
      const jar = new Map(this.cookie ? this.cookie.split('; ').map(p => p.split('=') as [string, string]) : [])
      if (value) jar.set(name!, value)
      else jar.delete(name!)
      this.cookie = [...jar].map(([k, v]) => `${k}=${v}`).join('; ')
    }
    const text = await res.text()
    let parsed: any = text
    try { parsed = text ? JSON.parse(text) : null }
    catch { /* not JSON */ }
    return { status: res.status, body: parsed, headers: res.headers }
  }

  get<T = any>(path: string, headers?: Record<string, string>) { return this.request<T>('GET', path, undefined, headers) }
  post<T = any>(path: string, body?: unknown, headers?: Record<string, string>) { return this.request<T>('POST', path, body ?? {}, headers) }
  patch<T = any>(path: string, body?: unknown) { return this.request<T>('PATCH', path, body ?? {}) }
  put<T = any>(path: string, body?: unknown) { return this.request<T>('PUT', path, body ?? {}) }
  delete<T = any>(path: string) { return this.request<T>('DELETE', path) }
}

export function uniqueEmail(prefix = 'user'): string {
  return `${prefix}-${randomBytes(5).toString('hex')}@example.test`
}

export const TEST_PASSWORD = 'bench-press-7731'

export interface SignedUp {
  client: Client
  user: { id: string, name: string, email: string }
  email: string
  password: string
  /** the personal team made at sign-up */
  team: { id: string, slug: string }
}

/** Signs a new person up through the API (a personal team comes with it). */
export async function signUp(overrides: { name?: string, email?: string, password?: string } = {}): Promise<SignedUp> {
  const client = new Client()
  const email = overrides.email ?? uniqueEmail()
  const password = overrides.password ?? TEST_PASSWORD
  const res = await client.post('/api/auth/signup', { name: overrides.name ?? 'Test Person', email, password })
  if (res.status !== 201) throw new Error(`sign-up failed: ${res.status} ${JSON.stringify(res.body)}`)
  const teams = await client.get('/api/v1/teams')
  return { client, user: res.body.user, email, password, team: teams.body[0] }
}

/** For arranging data: the request must succeed (200 or 201), or the error says what and why. */
export async function mustSucceed(request: Promise<ApiResponse>, what: string): Promise<ApiResponse> {
  const r = await request
  if (r.status !== 201 && r.status !== 200) throw new Error(`${what}: ${r.status} ${JSON.stringify(r.body)}`)
  return r
}

/** Knex without the app's table types (server/db/tables.ts): tests read rows as the database has them. */
const _untypedTable = (db: Knex, tableName: string) => db(tableName)
export type TestDb = ((tableName: string) => ReturnType<typeof _untypedTable>) & Omit<Knex, never>

let dbInstance: Knex | undefined
/** Direct database access, for arranging data and for checking that nothing changed. */
export function testDb(): TestDb {
  dbInstance ??= knex({ client: 'pg', connection: DATABASE_URL, pool: { min: 0, max: 4 } })
  return dbInstance as TestDb
}

/** The same connection with the app's table types, for calling server code (the sweep). */
export function testKnex(): Knex {
  testDb()
  return dbInstance!
}

export async function closeTestDb() {
  await dbInstance?.destroy()
  dbInstance = undefined
}

export async function addMember(teamId: string, userId: string, role: 'owner' | 'engineer' | 'reviewer') {
  await testDb()('memberships').insert({ team_id: teamId, user_id: userId, role })
}

export interface World {
  owner: SignedUp
  engineer: SignedUp
  reviewer: SignedUp
  outsider: SignedUp
  team: { id: string, slug: string }
  build: { id: string, slug: string }
  /** a build of the outsider's team, and a live rig token for it */
  foreignBuild: { id: string, slug: string }
  foreignToken: string
  /** a live rig token of `build` */
  ownToken: string
}

/**
 * One team with an Owner, an Engineer and a Reviewer and one build; an outsider with a team and
 * build of their own, and rig tokens for both builds.
 */
export async function makeWorld(): Promise<World> {
  const [owner, engineer, reviewer, outsider] = await Promise.all([
    signUp({ name: 'Olu Owner' }), signUp({ name: 'Eno Engineer' }), signUp({ name: 'Rae Reviewer' }), signUp({ name: 'Oz Outsider' }),
  ])
  const team = owner.team
  await addMember(team.id, engineer.user.id, 'engineer')
  await addMember(team.id, reviewer.user.id, 'reviewer')
  const b = await owner.client.post('/api/v1/builds', { team: team.slug, name: 'Matrix rig' })
  if (b.status !== 201) throw new Error(`build: ${b.status} ${JSON.stringify(b.body)}`)
  const fb = await outsider.client.post('/api/v1/builds', { team: outsider.team.slug, name: 'Elsewhere' })
  const ownTok = await owner.client.post(`/api/builds/${b.body.slug}/tokens`, { name: 'bench rig' })
  const foreignTok = await outsider.client.post(`/api/builds/${fb.body.slug}/tokens`, { name: 'their rig' })
  return {
    owner,
    engineer,
    reviewer,
    outsider,
    team,
    build: { id: b.body.id, slug: b.body.slug },
    foreignBuild: { id: fb.body.id, slug: fb.body.slug },
    foreignToken: foreignTok.body.token,
    ownToken: ownTok.body.token,
  }
}
