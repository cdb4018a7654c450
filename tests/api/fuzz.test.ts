import { randomUUID } from 'node:crypto'
import fc from 'fast-check'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { changedTables, dbFingerprint, type DbFingerprint } from '../support/dbState'
import { BASE_URL } from '../support/env'
import { routes, type Prepared, type RouteCase } from '../support/routeTable'

// A bounded fuzzer over every route of the route table. Each route gets a table of hostile
// versions of its valid call (each body field with a NUL, a lone surrogate, a wrong type; each
// query key and route parameter with a NUL or a traversal), then RUNS random hostile requests
// from fast-check with a fixed seed (the same requests on every run): wrong types, missing and
// unknown fields, huge strings, deep nesting, NUL and lone surrogates, non-finite and extreme
// numbers, bodies that are not JSON or not what the content type says, and path traversal in
// the route's parameters and query. The caller is the world's Owner (a rig token on API v1
// half the time), so requests get past authorization to the validation they probe.
// Every answer must be below 500; every refused one (4xx) must leave every table as it was.

const SEED = 20261202
const RUNS = 8
/** a request that takes longer than this is a failure (a hang) */
const REQUEST_TIMEOUT_MS = 15_000

// ---- hostile values ----

const HUGE = 'x'.repeat(100_000)
const hostileString = fc.oneof(
  fc.constantFrom(
    'a\u0000b', '\u0000', '\uD800', 'x\uDC00y', '\uDBFF\uDBFF',
    '../../../../etc/passwd', '..\\..\\..\\windows\\win.ini', '%2e%2e%2f%2e%2e%2fetc%2fpasswd', '/dev/zero',
    HUGE, '', ' ', '\u202E\uFEFF\u200B', '\' OR 1=1 --', '${7*7}{{7*7}}', '<img src=x onerror=alert(1)>',
    'NaN', 'Infinity', '-1', '1e308', '0x1p1024', 'null', 'true', '[]', '{}', '2026-02-30', '0000-00-00T99:99',
  ),
  fc.string({ maxLength: 30, unit: 'binary' }),
  // any UTF-16 code unit, lone surrogates included
  fc.string({ maxLength: 20, unit: fc.integer({ min: 0, max: 0xFFFF }).map(c => String.fromCharCode(c)) }),
)
const extremeNumber = fc.oneof(
  fc.constantFrom(1e308, -1e308, Number.MAX_VALUE, -Number.MAX_VALUE, 5e-324, -0, 2 ** 53 + 2, -(2 ** 63), 2 ** 31, 0.1 + 0.2, 1e-300),
  fc.double({ noNaN: true, noDefaultInfinity: true }),
  fc.integer(),
)
const hostileValue: fc.Arbitrary<unknown> = fc.oneof(
  { weight: 4, arbitrary: hostileString },
  { weight: 3, arbitrary: extremeNumber },
  { weight: 1, arbitrary: fc.constantFrom(true, false, null, {}, [], [null], ['a\u0000'], { $gt: '' }, JSON.parse('{"__proto__":{"admin":true}}')) },
  { weight: 1, arbitrary: fc.array(fc.oneof(hostileString, extremeNumber), { maxLength: 4 }) },
  { weight: 1, arbitrary: fc.dictionary(hostileString, extremeNumber, { maxKeys: 3 }) },
)

/** JSON text no JSON.stringify makes: non-finite numbers, deep nesting, broken syntax, prototype keys */
const RAW_BODIES = [
  '{"values":[NaN]}', '{"values":[1e999]}', '{"version":-1e999}', '{"name":Infinity}', '{', '{"a":1,}', '\u0000',
  '['.repeat(10_000) + ']'.repeat(10_000),
  '{"a":'.repeat(5_000) + '1' + '}'.repeat(5_000),
  '{"__proto__":{"role":"owner"},"constructor":{"prototype":{"admin":true}}}',
  '"just a string"', '12', 'null', '[]', '{"name":"\\ud800"}', '{"name":"a\\u0000b"}', '{"\\u0000":1}',
]

/** path segments for a route parameter: traversal, NUL, encoded surrogates, huge, wrong shapes */
const hostileSegment = fc.oneof(
  fc.constantFrom(
    '..%2F..%2F..%2Fetc%2Fpasswd', '%2e%2e', '..%5C..%5Cwin.ini', '%00', 'a%00b', '%ED%A0%80', '%C0%AE%C0%AE', '%25',
    'x'.repeat(5_000), '-1', '0', '1e308', 'null', 'undefined', '%20', '%E2%80%AE', randomUUID(), '00000000-0000-0000-0000-000000000000',
  ),
  hostileString.filter(s => s.length < 200 && !/[\uD800-\uDFFF]/.test(s)).map(s => encodeURIComponent(s) || '%20'),
)

/** query keys the routes read (and some they don't) */
const QUERY_KEYS = ['q', 'revision', 'target', 'kind', 'page', 'perPage', 'lane', 'a', 'b', 'file', 'quantity', 'reading', 'finding', 'download', 'token', 'user', 'build', 'sig', 'limit', 'before', 'after', 'from', 'to']
const queryPart = fc.tuple(fc.constantFrom(...QUERY_KEYS), fc.oneof(hostileSegment, fc.constant('1&q=2&q=3'), fc.constant('%00'), fc.constant(''))).map(([k, v]) => `${k}=${v}`)

// ---- requests ----

interface FuzzRequest {
  /** what the mutation was, for the failure message */
  kind: string
  params: Record<string, string>
  query: string
  body?: string | FormData
  contentType?: string
  rig: boolean
}

function fill(path: string, params: Record<string, string>): string {
  // hostile segments come already encoded; valid ones are encoded here
  return path.replace(/:(\w+)/g, (_, k: string) => params[k] ?? 'missing')
}

/** Fast-check's arbitrary of hostile requests for one route, built from a valid call of it. */
function requestsFor(route: RouteCase, valid: Prepared, validParams: Record<string, string>): fc.Arbitrary<FuzzRequest> {
  const paramNames = [...route.path.matchAll(/:(\w+)/g)].map(m => m[1]!)
  const hasBody = route.method !== 'GET' && route.method !== 'DELETE'
  const isForm = valid.body instanceof FormData
  const validObject = (valid.body && typeof valid.body === 'object' && !isForm ? valid.body : {}) as Record<string, unknown>
  const fieldNames = [...new Set([...Object.keys(validObject), 'name', 'id', 'version', 'values', 'title', 'label', 'role', 'email'])]
  const encoded = Object.fromEntries(Object.entries(validParams).map(([k, v]) => [k, encodeURIComponent(v)]))
  const rig = route.path.startsWith('/api/v1/') ? fc.boolean() : fc.constant(false)

  // the route's parameters: the valid ones, or one of them hostile
  const params = paramNames.length === 0
    ? fc.constant({ params: encoded, note: '' })
    : fc.oneof(
        { weight: 2, arbitrary: fc.constant({ params: encoded, note: '' }) },
        { weight: 1, arbitrary: fc.tuple(fc.constantFrom(...paramNames), hostileSegment).map(([k, v]) => ({ params: { ...encoded, [k]: v }, note: `:${k}=${v.slice(0, 60)} ` })) },
      )
  const query = fc.oneof(
    { weight: 1, arbitrary: fc.constant(valid.query ?? '') },
    { weight: 2, arbitrary: fc.array(queryPart, { minLength: 1, maxLength: 3 }).map(parts => [valid.query, ...parts].filter(Boolean).join('&')) },
  )

  type BodyCase = { kind: string, body?: string | FormData, contentType?: string }
  const json = (kind: string, value: unknown): BodyCase => ({ kind, body: JSON.stringify(value), contentType: 'application/json' })
  const bodies: fc.Arbitrary<BodyCase>[] = [
    fc.tuple(fc.constantFrom(...fieldNames), hostileValue).map(([k, v]) => json(`field ${k}`, { ...validObject, [k]: v })),
    fc.constantFrom(...fieldNames).map(k => json(`without ${k}`, Object.fromEntries(Object.entries(validObject).filter(([f]) => f !== k)))),
    fc.dictionary(hostileString.filter(s => s.length < 100), hostileValue, { maxKeys: 4 }).map(extra => json('unknown fields', { ...validObject, ...extra })),
    hostileValue.map(v => json('whole body', v)),
    fc.constantFrom(...RAW_BODIES).map(raw => ({ kind: `raw ${raw.slice(0, 30)}`, body: raw, contentType: 'application/json' })),
    fc.constantFrom('text/plain', 'application/x-www-form-urlencoded', 'application/xml', 'application/json; charset=utf-16', '').map(type => ({
      kind: `content type "${type}"`,
      body: type === 'application/x-www-form-urlencoded' ? new URLSearchParams(Object.entries(validObject).map(([k, v]) => [k, String(v)])).toString() : JSON.stringify(validObject),
      contentType: type,
    })),
    fc.tuple(fc.constantFrom(...fieldNames), hostileString).map(([k, v]) => {
      // multipart with one hostile text field (and a small file, so upload routes read it)
      const form = new FormData()
      for (const [f, value] of Object.entries(validObject)) form.append(f, String(value))
      form.append(k, v)
      form.append('file', new Blob(['fuzz bytes\n']), 'fuzz.txt')
      return { kind: `multipart field ${k}`, body: form }
    }),
  ]
  if (isForm) {
    bodies.push(fc.tuple(fc.constantFrom('revision', 'reading', 'finding', 'note'), hostileString).map(([k, v]) => {
      const form = new FormData()
      form.append(k, v)
      form.append('file', new Blob(['fuzz bytes\n']), 'fuzz.txt')
      return { kind: `upload field ${k}`, body: form }
    }))
    bodies.push(hostileString.map((v) => {
      const form = new FormData()
      form.append('revision', v)
      return { kind: 'upload without a file', body: form }
    }))
  }
  const body: fc.Arbitrary<BodyCase> = hasBody ? fc.oneof(...bodies) : fc.constant({ kind: 'no body' })

  return fc.record({ p: params, query, body, rig }).map(({ p, query, body, rig }) => ({
    kind: `${p.note}${body.kind}`,
    params: p.params,
    query,
    body: body.body,
    contentType: body.contentType,
    rig,
  }))
}

/**
 * The table-driven part: for every field of the valid body, the valid value with a NUL, with a
 * lone surrogate, and a value of the wrong type; for every query key and route parameter, a NUL.
 * Random runs may miss a given field; these reach each one.
 */
function tableFor(route: RouteCase, valid: Prepared, validParams: Record<string, string>): FuzzRequest[] {
  const out: FuzzRequest[] = []
  const encoded = Object.fromEntries(Object.entries(validParams).map(([k, v]) => [k, encodeURIComponent(v)]))
  const base = { params: encoded, query: valid.query ?? '', rig: false }
  const validObject = valid.body && typeof valid.body === 'object' && !(valid.body instanceof FormData) ? valid.body as Record<string, unknown> : null
  for (const [k, v] of Object.entries(validObject ?? {})) {
    const text = typeof v === 'string' ? v : 'a'
    const variants: [string, unknown][] = [['NUL', `${text}\u0000`], ['lone surrogate', `${text}\uD800`], ['wrong type', typeof v === 'number' ? String(v) : typeof v === 'string' ? 12345 : 'x']]
    if (typeof v === 'number') variants.push(['1e308', 1e308])
    if (Array.isArray(v)) variants.push(['NUL in a list', [...v.map(String), 'a\u0000']])
    for (const [what, value] of variants) {
      out.push({ ...base, kind: `table: ${k} ${what}`, body: JSON.stringify({ ...validObject, [k]: value }), contentType: 'application/json' })
    }
  }
  if (valid.body instanceof FormData) {
    const form = new FormData()
    form.append('revision', 'R\u0000')
    form.append('file', new Blob(['fuzz bytes\n']), 'fuzz.txt')
    out.push({ ...base, kind: 'table: upload field with a NUL', body: form })
  }
  const body = validObject ? JSON.stringify(validObject) : undefined
  const contentType = validObject ? 'application/json' : undefined
  for (const pair of (valid.query ?? '').split('&').filter(Boolean)) {
    const [k] = pair.split('=')
    out.push({ ...base, kind: `table: query ${k} with a NUL`, query: (valid.query ?? '').replace(pair, `${k}=a%00b`), body, contentType })
  }
  for (const k of [...route.path.matchAll(/:(\w+)/g)].map(m => m[1]!)) {
    out.push({ ...base, kind: `table: :${k} with a NUL`, params: { ...encoded, [k]: `${encoded[k]}%00` }, body, contentType })
    out.push({ ...base, kind: `table: :${k} as a traversal`, params: { ...encoded, [k]: '..%2F..%2F..%2Fetc%2Fpasswd' }, body, contentType })
  }
  return out
}

// ---- the run ----

/** the xmax of the current snapshot: it moves only when a transaction that wrote something ends */
async function writeMark(): Promise<string> {
  const { rows } = await testDb().raw('SELECT txid_snapshot_xmax(txid_current_snapshot())::text AS x') as { rows: { x: string }[] }
  return rows[0]!.x
}

/**
 * Refusals that write on purpose: a failed sign-in is recorded for the throttle and the team's
 * audit log (login_failures is not fingerprinted; the audit row is expected).
 */
let resetAskedAt = 0

function allowedChanges(route: RouteCase, status: number, digestSentAt: number): string[] {
  const allowed = route.path === '/api/auth/login' && status === 401 ? ['audit_log'] : []
  // a digest sent by an accepted request is written by the queue's job a little later (the
  // subscription's digested events, the delivery), whatever request is running then
  if (Date.now() - digestSentAt < 30_000) allowed.push('subscriptions', 'deliveries')
  // likewise a password reset asked for by an accepted request: the queue settles its
  // reset_requests row (and, for an account, writes its token and audit row) a little later
  if (Date.now() - resetAskedAt < 30_000) allowed.push('reset_requests', 'password_resets', 'audit_log')
  return allowed
}

interface Figures { requests: number, table: number, byStatus: Record<string, number>, refused: number, accepted: number, fingerprints: number }

describe('the fuzzer: hostile requests to every route get a 4xx (or are served) and never a 5xx', () => {
  let world: World
  const figures: Figures = { requests: 0, table: 0, byStatus: {}, refused: 0, accepted: 0, fingerprints: 0 }
  let started = 0
  let fingerprint: DbFingerprint
  let digestSentAt = 0
  let mark: string

  async function refresh() {
    mark = await writeMark()
    fingerprint = await dbFingerprint()
    figures.fingerprints++
  }

  beforeAll(async () => {
    world = await makeWorld()
    started = performance.now()
  })
  afterAll(async () => {
    const seconds = (performance.now() - started) / 1000
    const statuses = Object.entries(figures.byStatus).sort().map(([s, n]) => `${s}×${n}`).join(' ')
    console.log(`fuzz: ${figures.requests} requests over ${routes.length} routes in ${seconds.toFixed(1)} s (seed ${SEED}; ${figures.table} from the table, ${RUNS} random per route); `
      + `${figures.refused} refused (4xx), ${figures.accepted} served; statuses ${statuses}; ${figures.fingerprints} table fingerprints`)
    await closeTestDb()
  })

  // a call that ends sessions comes with a session of its own (prepared), so the Owner's stays live
  async function send(route: RouteCase, r: FuzzRequest, cookie = world.owner.client.cookie): Promise<number> {
    const headers: Record<string, string> = { 'x-forwarded-for': world.owner.client.ip }
    if (r.rig) headers.authorization = `Bearer ${world.ownToken}`
    else headers.cookie = cookie
    if (r.contentType !== undefined && typeof r.body === 'string') headers['content-type'] = r.contentType
    const url = `${BASE_URL}${fill(route.path, r.params)}${r.query ? `?${r.query}` : ''}`
    const res = await fetch(url, { method: route.method, headers, body: r.body, redirect: 'manual', signal: AbortSignal.timeout(REQUEST_TIMEOUT_MS) })
    await res.arrayBuffer()
    return res.status
  }

  it.each(routes.map((r, i) => [`${r.method} ${r.path}`, r, i] as [string, RouteCase, number]))('%s', async (_name, route, index) => {
    const valid = await route.prepare?.(world, 'owner') ?? {}
    const validParams = valid.params ?? { team: world.team.slug, build: world.build.slug }
    await refresh()
    const check = async (r: FuzzRequest) => {
      if (await writeMark() !== mark) await refresh() // background work or the last accepted request wrote
      const status = await send(route, r, valid.cookie)
      figures.requests++
      figures.byStatus[status] = (figures.byStatus[status] ?? 0) + 1
      expect(status, `${r.kind}: a server error`).toBeLessThan(500)
      if (status < 400) figures.accepted++
      else figures.refused++
      if (status < 400 && route.path === '/api/builds/:build/digest/send') digestSentAt = Date.now()
      if (status < 400 && route.path === '/api/auth/forgot') resetAskedAt = Date.now()
      if (await writeMark() === mark) return
      const before = fingerprint
      await refresh()
      if (status >= 400) {
        const allowed = allowedChanges(route, status, digestSentAt)
        expect(changedTables(before, fingerprint).filter(t => !allowed.includes(t)), `${r.kind}: refused with ${status}, yet rows changed`).toEqual([])
      }
    }
    const table = tableFor(route, valid, validParams)
    figures.table += table.length
    for (const r of table) await check(r)
    await fc.assert(fc.asyncProperty(requestsFor(route, valid, validParams), check), { seed: SEED + index, numRuns: RUNS, endOnFailure: true })
  })
})
