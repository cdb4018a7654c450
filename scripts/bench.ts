// Performance figures for `npm run bench` (started by scripts/bench.sh, which provides a scratch
// database in DATABASE_URL and the built server in RATCHET_BENCH_BASE_URL). Each section seeds
// what it needs and prints its figures; nothing is asserted.
//   tsx scripts/bench.ts [section …]

import { performance } from 'node:perf_hooks'
import knex from 'knex'
import { knexConfig } from '../knexfile'
import { archiveSection, filesSection } from './bench-files'
import { loadSection } from './bench-load'
import { http, ms, random, RAW_QUERY, rawBoard, RUNS, seedBoard, seedBuild, serverTiming, signIn, summary, type Context, type Section } from './lib/benchKit'
import type { Lane } from '#shared/utils/lanes'

// ---------------------------------------------------------------------------------------
// scoreboard

async function measureScoreboard(ctx: Context, build: { id: string, slug: string }) {
  const path = `/api/v1/builds/${build.slug}/scoreboard`
  for (let i = 0; i < 5; i++) await http(ctx, 'GET', path)
  const app: number[] = []
  const wall: number[] = []
  const queries = new Set<number>()
  let bytes = 0
  for (let i = 0; i < RUNS; i++) {
    const { res, text, wall: w } = await http(ctx, 'GET', path)
    if (res.status !== 200) {
      throw new Error(res.status === 404
        ? 'the scoreboard route is missing from .output: rebuild with RATCHET_BENCH_BUILD=1 npm run bench'
        : `scoreboard: ${res.status} ${text.slice(0, 200)}`)
    }
    const timing = serverTiming(res)
    app.push(timing.app)
    queries.add(timing.queries)
    wall.push(w)
    bytes = text.length
  }
  for (let i = 0; i < 3; i++) await ctx.db.raw(RAW_QUERY, [build.id])
  const raw: number[] = []
  let rows = 0
  for (let i = 0; i < RUNS; i++) {
    const started = performance.now()
    const result = await ctx.db.raw(RAW_QUERY, [build.id])
    raw.push(performance.now() - started)
    rows = result.rows.length
  }
  return { app: summary(app), wall: summary(wall), raw: summary(raw), queries: [...queries], bytes, rows }
}

const scoreboardSection: Section = {
  name: 'scoreboard',
  async run(ctx) {
    const sizes = [
      { targets: 10, revisions: 20, samples: 5 },
      { targets: 100, revisions: 200, samples: 5 },
    ]
    const results = []
    for (const size of sizes) {
      const started = performance.now()
      const build = await seedBuild(ctx, `Bench ${size.targets}x${size.revisions}`, size.targets, size.revisions, size.samples)
      const seeded = performance.now() - started
      console.log(`  seeded ${size.targets} targets × ${size.revisions} revisions × ${size.samples} samples in ${(seeded / 1000).toFixed(1)} s`)
      results.push({ size, ...(await measureScoreboard(ctx, build)) })
    }
    console.log()
    console.log('  size (targets × revisions)   scoreboard app median / p95   client median   raw SQL median   ratio   SQL queries   rows    JSON')
    for (const r of results) {
      const ratio = r.app.median / r.raw.median
      console.log(`  ${`${r.size.targets} × ${r.size.revisions}`.padEnd(28)} ${`${ms(r.app.median)} / ${ms(r.app.p95)}`.padEnd(29)} ${ms(r.wall.median).padEnd(15)} ${ms(r.raw.median).padEnd(16)} ${ratio.toFixed(2).padEnd(7)} ${r.queries.join(',').padEnd(13)} ${String(r.rows).padEnd(7)} ${(r.bytes / 1e6).toFixed(2)} MB`)
    }
    const counts = new Set(results.flatMap(r => r.queries))
    console.log()
    console.log(`  goal: ratio ≤ 2 on the large build (measured ${(results.at(-1)!.app.median / results.at(-1)!.raw.median).toFixed(2)}); `
      + `queries per request constant (${counts.size === 1 ? `yes, ${[...counts][0]}` : `no: ${[...counts].join(' vs ')}`})`)
    console.log('  app = Server-Timing app;dur (arrival to response, JSON serialisation included); raw SQL = one query for the same rows, timed from this process')
  },
}

// ---------------------------------------------------------------------------------------
// findings board

const BOARD_SIZE = Number(process.env.RATCHET_BENCH_FINDINGS ?? 2000)
const BOARD_MOVES = Number(process.env.RATCHET_BENCH_MOVES ?? 300)

async function timeRequests(ctx: Context, path: string) {
  for (let i = 0; i < 5; i++) await http(ctx, 'GET', path)
  const app: number[] = []
  const sql: number[] = []
  const wall: number[] = []
  let bytes = 0
  for (let i = 0; i < RUNS; i++) {
    const { res, text, wall: w } = await http(ctx, 'GET', path)
    if (res.status !== 200) throw new Error(`${path}: ${res.status} ${text.slice(0, 200)}`)
    const timing = serverTiming(res)
    app.push(timing.app)
    sql.push(timing.db)
    wall.push(w)
    bytes = text.length
  }
  return { app: summary(app), sql: summary(sql), wall: summary(wall), bytes }
}

const boardSection: Section = {
  name: 'board',
  async run(ctx) {
    const started = performance.now()
    const { build, ids } = await seedBoard(ctx, BOARD_SIZE)
    console.log(`  seeded ${ids.length} findings in ${((performance.now() - started) / 1000).toFixed(1)} s`)
    const team = (await ctx.db('builds').where({ id: build.id }).first('team_id'))!

    const board = await timeRequests(ctx, `/api/v1/builds/${build.slug}/findings/board`)
    const list = await timeRequests(ctx, `/api/v1/builds/${build.slug}/findings`)
    for (let i = 0; i < 3; i++) await rawBoard(ctx.db, build.id, team.team_id)
    const raw: number[] = []
    let rows = 0
    for (let i = 0; i < RUNS; i++) {
      const t0 = performance.now()
      rows = await rawBoard(ctx.db, build.id, team.team_id)
      raw.push(performance.now() - t0)
    }
    const rawSummary = summary(raw)

    // moves between lanes without entry rules, and into Retest (its rule read on every move)
    const cards = JSON.parse((await http(ctx, 'GET', `/api/v1/builds/${build.slug}/findings`)).text) as { id: string, lane: Lane, version: number, fixes: { state: string }[] }[]
    const byLane = (lane: Lane) => cards.filter(c => c.lane === lane)
    const rnd = random(7)
    const free: Lane[] = ['spotted', 'traced', 'bench', 'parked']
    const moveTimes: number[] = []
    const retestTimes: number[] = []
    const moveDb: number[] = []
    const queries = new Set<number>()
    for (let i = 0; i < BOARD_MOVES; i++) {
      const toRetest = i % 5 === 4
      const pool = toRetest ? cards.filter(c => c.lane !== 'retest' && c.lane !== 'closed' && c.fixes.some(f => f.state === 'landed')) : cards.filter(c => free.includes(c.lane))
      if (!pool.length) continue
      const card = pool[Math.floor(rnd() * pool.length)]!
      const lane = toRetest ? 'retest' : free[Math.floor(rnd() * free.length)]!
      const peers = byLane(lane).filter(c => c.id !== card.id)
      const neighbour = peers.length ? peers[Math.floor(rnd() * peers.length)]! : null
      const body = { lane, version: card.version, ...(neighbour ? (rnd() < 0.5 ? { before: neighbour.id } : { after: neighbour.id }) : {}) }
      const { res, text } = await http(ctx, 'POST', `/api/v1/findings/${card.id}/move`, body)
      if (res.status !== 200) throw new Error(`move: ${res.status} ${text.slice(0, 200)}`)
      const timing = serverTiming(res)
      if (toRetest) retestTimes.push(timing.app)
      else moveTimes.push(timing.app)
      moveDb.push(timing.db)
      queries.add(timing.queries)
      const moved = JSON.parse(text).finding as { lane: Lane, version: number }
      card.lane = moved.lane
      card.version = moved.version
    }
    // into Closed: verified by R6's readings (the rule reads the revisions' statuses), and with an
    // Owner's override (its audit row written by the move's statement)
    const closeTimes: number[] = []
    const overrideTimes: number[] = []
    const open = cards.filter(c => c.lane !== 'closed' && c.fixes.some(f => f.state === 'landed'))
    for (const [k, card] of open.slice(0, BOARD_MOVES / 3).entries()) {
      const overriding = k % 2 === 1
      const { res, text } = await http(ctx, 'POST', `/api/v1/findings/${card.id}/move`, { lane: 'closed', version: card.version, ...(overriding ? { override: { reason: 'Bench: closed by the Owner' } } : {}) })
      if (res.status !== 200) throw new Error(`close: ${res.status} ${text.slice(0, 200)}`)
      ;(overriding ? overrideTimes : closeTimes).push(serverTiming(res).app)
    }
    const overrideClose = summary(overrideTimes)
    const close = summary(closeTimes)
    const move = summary(moveTimes)
    const retest = summary(retestTimes)
    const db = summary(moveDb)
    const ratio = board.app.median / rawSummary.median

    console.log()
    console.log(`  board of ${rows} findings              server median / p95        client median   JSON`)
    console.log(`  GET …/:build/findings/board           ${`${ms(board.app.median)} / ${ms(board.app.p95)}`.padEnd(27)}${ms(board.wall.median).padEnd(16)}${(board.bytes / 1e6).toFixed(2)} MB`)
    console.log(`  GET /api/v1/builds/:build/findings    ${`${ms(list.app.median)} / ${ms(list.app.p95)}`.padEnd(27)}${ms(list.wall.median).padEnd(16)}${(list.bytes / 1e6).toFixed(2)} MB`)
    console.log(`  raw SQL of the board's rows           ${ms(rawSummary.median)} / ${ms(rawSummary.p95)}   (the board request's own queries, summed: ${ms(board.sql.median)})`)
    console.log(`  move between free lanes (${moveTimes.length})        ${ms(move.median)} / ${ms(move.p95)}`)
    console.log(`  move into Retest, rule read (${retestTimes.length})     ${ms(retest.median)} / ${ms(retest.p95)}   SQL queries per move: ${[...queries].sort((a, b) => a - b).join(', ')}`)
    console.log(`  into Closed, verified (${closeTimes.length})          ${ms(close.median)} / ${ms(close.p95)}`)
    console.log(`  into Closed, Owner override (${overrideTimes.length})    ${ms(overrideClose.median)} / ${ms(overrideClose.p95)}   (with its audit row)`)
    console.log(`  of a move, waiting on SQL (all ${moveDb.length})      ${ms(db.median)} / ${ms(db.p95)}`)
    console.log()
    const worst = Math.max(move.p95, retest.p95, close.p95, overrideClose.p95)
    console.log(`  goal: a move ≤ 10 ms p95 server time (slowest kind measured ${ms(worst)}: ${worst <= 10 ? 'met' : 'NOT met'}); `
      + `board ≤ 2 × raw SQL (measured ${ratio.toFixed(2)}: ${ratio <= 2 ? 'met' : 'NOT met'})`)
    console.log('  server = Server-Timing app;dur; raw SQL = the board request\'s own statements run side by side from this process')
  },
}

// ---------------------------------------------------------------------------------------

const SECTIONS: Section[] = [scoreboardSection, filesSection, boardSection, archiveSection, loadSection]

const wanted = process.argv.slice(2)
const db = knex(knexConfig())
try {
  const ctx = await signIn(db)
  for (const section of SECTIONS) {
    if (wanted.length > 0 && !wanted.includes(section.name)) continue
    console.log(`\n== bench: ${section.name} (${RUNS} requests per size)`)
    await section.run(ctx)
  }
}
finally {
  await db.destroy()
}
