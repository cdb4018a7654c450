// `npm run bench -- load`: throughput under load, as a share of the framework's own floor measured
// in the same run. 50 keep-alive connections, each signed in, hammer one URL at a time for a few
// seconds (autocannon); the floor is GET /api/health (routing, the session-less middleware and one
// database round trip). Each line starts right after a change (every data stamp moved): its first
// request computes and renders afresh; the load then gets what the app kept. Printed per line:
// requests per second, its share of the floor, p50 and p99 latency, errors, the SQL round trips
// of the first request and of a later one, and the first one's time (Server-Timing). Then the same API
// reads on a large build against the throughput of their own raw SQL run from this process with
// the app's pool size and the same concurrency, and the client's JavaScript and CSS that the build
// page loads, gzip'd. Nothing is asserted: the goals are printed beside the figures.
//   RATCHET_BENCH_LOAD_SECONDS (default 8) sets each line's duration; RATCHET_BENCH_LOAD_LARGE=0 skips the large build.
import { gzipSync } from 'node:zlib'
import autocannon from 'autocannon'
import knex, { type Knex } from 'knex'
import { chromium } from 'playwright-core'
import { knexConfig } from '../knexfile'
import { DEMO_PASSWORD, seed as seedAccounts } from '../seeds/01_demo-accounts'
import { seed as seedBuilds } from '../seeds/02_demo-builds'
import { seed as seedFindings } from '../seeds/03_demo-findings'
import { seed as seedDigests } from '../seeds/05_demo-digests'
import { addFindings, BASE_URL, http, RAW_QUERY, rawBoard, seedBuild, type Context, type Section } from './lib/benchKit'

const SECONDS = Number(process.env.RATCHET_BENCH_LOAD_SECONDS ?? 8)
const CONNECTIONS = 50
/** the build page's client code budget, gzip'd (docs/performance.md) */
const BUDGET = { js: 225_000, css: 20_000, entry: 100_000 }

interface Timed { queries: number | null, ms: number | null, bytes: number }
interface Blast { rps: number, p50: number, p99: number, errors: number, non2xx: number, cold: Timed, kept: Timed }

/** One request's Server-Timing: its SQL round trips and the app's time (null where the answer has none). */
async function timed(cookie: string, path: string): Promise<Timed> {
  const { res, text } = await http({ cookie }, 'GET', path)
  if (res.status !== 200) throw new Error(`${path}: ${res.status} ${text.slice(0, 200)}`)
  const timing = res.headers.get('server-timing') ?? ''
  const queries = /queries=(\d+)/.exec(timing)
  const app = /app;dur=([\d.]+)/.exec(timing)
  return { queries: queries ? Number(queries[1]) : null, ms: app ? Number(app[1]) : null, bytes: text.length }
}

/**
 * `path` under load. First one request right after every data stamp has moved (as after any change
 * to the build: nothing kept, everything computed and, for a page, rendered), then the load, which
 * after its first request reads what was kept, then one more request for its round trips.
 */
async function blast(db: Knex, cookie: string, path: string, seconds = SECONDS): Promise<Blast> {
  await db.raw(`UPDATE data_stamps SET n = nextval('data_stamps_seq')`)
  const cold = await timed(cookie, path)
  // a page is asked for as a browser asks: HTML, compressed if the server will
  const headers = path.startsWith('/api/') ? { cookie } : { cookie, 'accept': 'text/html', 'accept-encoding': 'gzip, deflate, br' }
  // warm-up: JIT, caches, the pool's connections
  await autocannon({ url: `${BASE_URL}${path}`, connections: CONNECTIONS, duration: 1, headers })
  const r = await autocannon({ url: `${BASE_URL}${path}`, connections: CONNECTIONS, duration: seconds, headers })
  const kept = await timed(cookie, path)
  return { rps: r.requests.total / seconds, p50: r.latency.p50, p99: r.latency.p99, errors: r.errors + r.timeouts, non2xx: r.non2xx, cold, kept }
}

const trips = (b: Blast) => `${b.cold.queries ?? '–'}/${b.kept.queries ?? '–'}`
const coldMs = (b: Blast) => (b.cold.ms === null ? '–' : msText(b.cold.ms))

/** Throughput of `run` with CONNECTIONS concurrent callers over a pool as large as the app's. */
async function rawThroughput(run: () => Promise<unknown>, seconds = Math.max(2, SECONDS / 2)): Promise<number> {
  for (let i = 0; i < 5; i++) await run()
  let done = 0
  const until = Date.now() + seconds * 1000
  await Promise.all(Array.from({ length: CONNECTIONS }, async () => {
    while (Date.now() < until) {
      await run()
      done++
    }
  }))
  return done / seconds
}

async function signInAs(email: string): Promise<string> {
  const { res, text } = await http(null, 'POST', '/api/auth/login', { email, password: DEMO_PASSWORD })
  if (res.status !== 200) throw new Error(`sign-in as ${email}: ${res.status} ${text.slice(0, 200)}`)
  return res.headers.getSetCookie().map(c => c.split(';')[0]).join('; ')
}

const pct = (x: number) => `${(100 * x).toFixed(1)} %`
const msText = (x: number) => `${Math.round(x)} ms`
const kb = (x: number) => `${(x / 1000).toFixed(1)} KB`

function printTable(rows: { label: string, b: Blast }[], floor: number) {
  console.log(`  ${'request'.padEnd(52)} ${'req/s'.padStart(8)} ${'of floor'.padStart(9)} ${'p50'.padStart(7)} ${'p99'.padStart(8)} ${'errors'.padStart(7)} ${'trips'.padStart(6)} ${'cold'.padStart(8)} ${'body'.padStart(9)}`)
  for (const { label, b } of rows) {
    console.log(`  ${label.padEnd(52)} ${b.rps.toFixed(0).padStart(8)} ${pct(b.rps / floor).padStart(9)} ${msText(b.p50).padStart(7)} ${msText(b.p99).padStart(8)} ${String(b.errors + b.non2xx).padStart(7)} ${trips(b).padStart(6)} ${coldMs(b).padStart(8)} ${kb(b.kept.bytes).padStart(9)}`)
  }
  console.log(`  trips: SQL round trips of the first request after a change / of a later one (Server-Timing); cold: that first request's time in the app;`)
  console.log(`  body: as decoded (pages are asked for as a browser does, accepting gzip)`)
}

/** The JavaScript and CSS the build page loads in Chromium, each file gzip'd as served. */
async function clientWeight(cookie: string, path: string, dataSaver: boolean) {
  const browser = await chromium.launch({ executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium', args: ['--headless', '--no-sandbox', '--disable-gpu'] })
  try {
    const context = await browser.newContext()
    const [name, value] = cookie.split('; ')[0]!.split('=')
    await context.addCookies([{ name: name!, value: value!, url: BASE_URL }])
    // with the browser's data saver on, the app doesn't prefetch the pages its links lead to: what
    // is left is the code of this page alone
    if (dataSaver) await context.addInitScript(() => Object.defineProperty(navigator, 'connection', { value: { saveData: true, effectiveType: '4g' } }))
    const page = await context.newPage()
    const files: { url: string, type: 'js' | 'css', gz: number, prefetch: boolean }[] = []
    const pending: Promise<void>[] = []
    page.on('response', (res) => {
      const url = res.url()
      const type = url.endsWith('.js') ? 'js' : url.endsWith('.css') ? 'css' : null
      if (!type || !url.startsWith(BASE_URL)) return
      // chunks the browser fetches at idle for pages and dialogs not yet opened (rel=prefetch) are counted apart
      const prefetch = /prefetch/i.test(res.request().headers()['sec-purpose'] ?? res.request().headers()['purpose'] ?? '')
      pending.push(res.body().then((body) => { files.push({ url, type, gz: gzipSync(body, { level: 9 }).length, prefetch }) }, () => {}))
    })
    await page.goto(`${BASE_URL}${path}`, { waitUntil: 'networkidle' })
    await Promise.all(pending)
    const entryUrl = await page.evaluate(() => document.querySelector<HTMLScriptElement>('script[type="module"][src]')?.src ?? '')
    const chartLoaded = await page.evaluate(() => Boolean(document.querySelector('canvas')))
    const used = files.filter(f => !f.prefetch)
    return {
      js: used.filter(f => f.type === 'js').reduce((s, f) => s + f.gz, 0),
      css: used.filter(f => f.type === 'css').reduce((s, f) => s + f.gz, 0),
      entry: used.find(f => f.url === entryUrl)?.gz ?? 0,
      count: used.length,
      prefetched: files.filter(f => f.prefetch).reduce((s, f) => s + f.gz, 0),
      largest: used.filter(f => f.type === 'js').sort((a, b) => b.gz - a.gz).slice(0, 5).map(f => `${f.url.split('/').pop()} ${kb(f.gz)}`),
      chartLoaded,
    }
  }
  finally {
    await browser.close()
  }
}

async function demoLines(db: Knex): Promise<void> {
  await seedAccounts(db)
  await seedBuilds(db)
  await seedFindings(db)
  await seedDigests(db)
  const cookie = await signInAs('engineer@demo.test')
  const b = '/api/v1/builds/trailhopper'
  const lines: [string, string][] = [
    ['GET /api/health (the floor)', '/api/health'],
    ['GET …/trailhopper/scoreboard', `${b}/scoreboard`],
    ['GET …/trailhopper/findings', `${b}/findings`],
    ['GET …/trailhopper/targets/top_speed (its history)', `${b}/targets/top_speed`],
    ['GET …/trailhopper/events', `${b}/events`],
    ['page /builds/trailhopper', '/builds/trailhopper'],
    ['page /builds/trailhopper/targets/top_speed', '/builds/trailhopper/targets/top_speed'],
    ['page /builds/trailhopper/revisions/R5', '/builds/trailhopper/revisions/R5'],
    ['page /builds/trailhopper?tab=board', '/builds/trailhopper?tab=board'],
  ]
  const rows: { label: string, b: Blast }[] = []
  for (const [label, path] of lines) rows.push({ label, b: await blast(db, cookie, path) })
  const floor = rows[0]!.b.rps
  console.log(`\n  the demo build, ${CONNECTIONS} connections signed in as an Engineer, ${SECONDS} s each`)
  printTable(rows, floor)
  const api = rows.slice(1, 5)
  const pages = rows.slice(5)
  const apiWorst = Math.min(...api.map(r => r.b.rps)) / floor
  const pageWorst = Math.min(...pages.map(r => r.b.rps)) / floor
  const pageP99 = Math.max(...pages.map(r => r.b.p99))
  const errors = rows.reduce((s, r) => s + r.b.errors + r.b.non2xx, 0)
  console.log(`  goals: API reads ≥ 50 % of the floor (lowest ${pct(apiWorst)}: ${apiWorst >= 0.5 ? 'met' : 'NOT met'}); `
    + `pages ≥ 15 % (lowest ${pct(pageWorst)}: ${pageWorst >= 0.15 ? 'met' : 'NOT met'}) with p99 ≤ 1 s (worst ${msText(pageP99)}: ${pageP99 <= 1000 ? 'met' : 'NOT met'}); `
    + `0 errors (${errors})`)

  const weight = await clientWeight(cookie, '/builds/trailhopper', true)
  const withLinks = await clientWeight(cookie, '/builds/trailhopper', false)
  console.log(`\n  the build page's own client code, gzip'd: JavaScript ${kb(weight.js)} (entry ${kb(weight.entry)}), CSS ${kb(weight.css)}, ${weight.count} files; a chart drawn on load: ${weight.chartLoaded ? 'yes' : 'no'}`)
  console.log(`  largest: ${weight.largest.join(', ')}`)
  console.log(`  fetched besides, ahead of use: ${kb(withLinks.js + withLinks.prefetched - weight.js)} (the pages its links lead to, and dialogs, prefetched at idle)`)
  const within = weight.js <= BUDGET.js && weight.css <= BUDGET.css && weight.entry <= BUDGET.entry
  console.log(`  budget: JavaScript ≤ ${kb(BUDGET.js)}, entry ≤ ${kb(BUDGET.entry)}, CSS ≤ ${kb(BUDGET.css)}: ${within ? 'held' : 'NOT held'}`)
}

async function largeLines(ctx: Context): Promise<void> {
  const started = performance.now()
  const build = await seedBuild(ctx, 'Load 100x200', 100, 200, 5)
  await addFindings(ctx, build, 2000)
  const team = (await ctx.db('builds').where({ id: build.id }).first('team_id'))!
  const target = (await ctx.db('targets').where({ build_id: build.id, key: 't050' }).first('id'))!
  console.log(`\n  a large build (100 targets × 200 revisions × 5 samples, 2,000 findings), seeded in ${((performance.now() - started) / 1000).toFixed(1)} s`)
  const b = `/api/v1/builds/${build.slug}`
  const pool = knex({ ...knexConfig(), pool: { min: 0, max: 10 } })
  try {
    const reads: { label: string, path: string, raw: () => Promise<unknown> }[] = [
      { label: 'GET …/scoreboard', path: `${b}/scoreboard`, raw: () => pool.raw(RAW_QUERY, [build.id]) },
      { label: 'GET …/findings', path: `${b}/findings`, raw: () => rawBoard(pool, build.id, team.team_id) },
      {
        label: 'GET …/targets/t050 (its history)',
        path: `${b}/targets/t050`,
        raw: () => Promise.all([
          pool.raw(`SELECT c.*, r.label, r.seq FROM cell_stats c JOIN revisions r ON r.id = c.revision_id WHERE c.target_id = ? ORDER BY r.seq`, [target.id]),
          pool.raw('SELECT * FROM readings WHERE target_id = ? ORDER BY taken_at', [target.id]),
        ]),
      },
      {
        label: 'GET …/events',
        path: `${b}/events`,
        raw: () => pool.raw(`SELECT e.*, t.key, t.name, r.label, f.title FROM events e LEFT JOIN targets t ON t.id = e.target_id
          LEFT JOIN revisions r ON r.id = e.revision_id LEFT JOIN findings f ON f.id = e.finding_id WHERE e.build_id = ? ORDER BY e.id DESC LIMIT 200`, [build.id]),
      },
    ]
    console.log(`  ${'request'.padEnd(40)} ${'req/s'.padStart(8)} ${'raw SQL/s'.padStart(10)} ${'share'.padStart(8)} ${'p99'.padStart(8)} ${'errors'.padStart(7)} ${'trips'.padStart(6)} ${'cold'.padStart(8)} ${'body'.padStart(10)}`)
    let worst = Infinity
    for (const r of reads) {
      const api = await blast(ctx.db, ctx.cookie, r.path)
      const raw = await rawThroughput(r.raw)
      worst = Math.min(worst, api.rps / raw)
      console.log(`  ${r.label.padEnd(40)} ${api.rps.toFixed(0).padStart(8)} ${raw.toFixed(0).padStart(10)} ${pct(api.rps / raw).padStart(8)} ${msText(api.p99).padStart(8)} ${String(api.errors + api.non2xx).padStart(7)} ${trips(api).padStart(6)} ${coldMs(api).padStart(8)} ${kb(api.kept.bytes).padStart(10)}`)
    }
    console.log(`  goal: each ≥ 50 % of its raw SQL's throughput (lowest ${pct(worst)}: ${worst >= 0.5 ? 'met' : 'NOT met'}); compare the trips with the demo's: they must not grow with the build`)
  }
  finally {
    await pool.destroy()
  }
}

export const loadSection: Section = {
  name: 'load',
  async run(ctx) {
    await demoLines(ctx.db)
    if (process.env.RATCHET_BENCH_LOAD_LARGE !== '0') await largeLines(ctx)
  },
}
