// Shared by the bench's sections (scripts/bench.ts, bench-load.ts): HTTP with a session, Server-Timing,
// summaries, and the bulk seeding of large builds and boards. The statistics and cache rows come
// from the same pure functions and row mapping as the API.
import { randomBytes } from 'node:crypto'
import { performance } from 'node:perf_hooks'
import type { Knex } from 'knex'
import type { CellRow } from '../../server/db/tables'
import { cellRowOf, statsColumns, type CellTarget } from '../../server/utils/measure/statsCache'
import { cellFromStats, decideCells, poolCell } from '#shared/utils/cellStats'
import type { Comparator } from '#shared/utils/conformance'
import { computeStats } from '#shared/utils/readingStats'
import { diffToSI, parseUnit, toSI } from '#shared/utils/units'
import type { Lane } from '#shared/utils/lanes'
import { spreadRanks } from '#shared/utils/rank'

export const BASE_URL = process.env.RATCHET_BENCH_BASE_URL ?? 'http://127.0.0.1:3200'
export const RUNS = Number(process.env.RATCHET_BENCH_RUNS ?? 40)

export interface Context {
  db: Knex
  /** a signed-in session (its cookie) and the team it owns */
  cookie: string
  teamSlug: string
  userId: string
}

export interface Section {
  name: string
  run: (ctx: Context) => Promise<void>
}

// ---------------------------------------------------------------------------------------
// helpers

export function quantile(sorted: number[], q: number): number {
  if (sorted.length === 0) return NaN
  const pos = (sorted.length - 1) * q
  const lo = Math.floor(pos)
  const hi = Math.ceil(pos)
  return sorted[lo]! + (sorted[hi]! - sorted[lo]!) * (pos - lo)
}

export function summary(samples: number[]) {
  const sorted = [...samples].sort((a, b) => a - b)
  return { median: quantile(sorted, 0.5), p95: quantile(sorted, 0.95) }
}

export const ms = (x: number) => `${x.toFixed(1)} ms`

/** A small deterministic generator (mulberry32), so every run seeds the same data. */
export function random(seed: number) {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6D2B79F5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

export async function http(ctx: Pick<Context, 'cookie'> | null, method: string, path: string, body?: unknown) {
  const headers: Record<string, string> = {}
  if (ctx?.cookie) headers.cookie = ctx.cookie
  if (body !== undefined) headers['content-type'] = 'application/json'
  const started = performance.now()
  const res = await fetch(`${BASE_URL}${path}`, { method, headers, body: body === undefined ? undefined : JSON.stringify(body) })
  const text = await res.text()
  return { res, text, wall: performance.now() - started }
}

/** `app;dur=…` and the query count from the server's Server-Timing header. */
export function serverTiming(res: Response) {
  const header = res.headers.get('server-timing') ?? ''
  const app = /app;dur=([\d.]+)/.exec(header)
  const db = /db;dur=([\d.]+)/.exec(header)
  const queries = /queries=(\d+)/.exec(header)
  if (!app || !db || !queries) throw new Error(`no Server-Timing on the answer: "${header}"`)
  return { app: Number(app[1]), db: Number(db[1]), queries: Number(queries[1]) }
}

export async function signIn(db: Knex): Promise<Context> {
  const email = `bench-${randomBytes(4).toString('hex')}@example.test`
  const { res } = await http(null, 'POST', '/api/auth/signup', { name: 'Bench Runner', email, password: 'bench-press-7731' })
  if (res.status !== 201) throw new Error(`sign-up failed: ${res.status}`)
  const cookie = res.headers.getSetCookie().map(c => c.split(';')[0]).join('; ')
  const user = (await db('users').where({ email }).first('id'))!
  const team = await db('teams').join('memberships', 'memberships.team_id', 'teams.id').where('memberships.user_id', user.id).first('teams.slug')
  return { db, cookie, teamSlug: team!.slug, userId: user.id }
}

// ---- large builds

export const UNITS: { unit: string, entered: string, base: number, spread: number }[] = [
  { unit: 'N', entered: 'lbf', base: 120, spread: 1.5 },
  { unit: 'km/h', entered: 'mph', base: 24.5, spread: 0.2 },
  { unit: '°C', entered: '°F', base: 75, spread: 0.8 },
  { unit: 'A', entered: 'mA', base: 29, spread: 0.4 },
  { unit: 'kg', entered: 'lb', base: 4.1, spread: 0.02 },
]
export const COMPARATORS: Comparator[] = ['atLeast', 'atMost', 'between']

/**
 * A build with `targets` × `revisions` cells of `samples` values each, inserted in bulk. The
 * statistics and the cache rows come from the same pure functions and row mapping as the API.
 */
export async function seedBuild(ctx: Context, name: string, targets: number, revisions: number, samples: number) {
  const { db } = ctx
  const created = await http(ctx, 'POST', '/api/v1/builds', { team: ctx.teamSlug, name })
  if (created.res.status !== 201) throw new Error(`build: ${created.res.status} ${created.text}`)
  const build = JSON.parse(created.text) as { id: string, slug: string }
  const rnd = random(targets * 1000 + revisions)

  const targetRows = Array.from({ length: targets }, (_, i) => {
    const u = UNITS[i % UNITS.length]!
    const unit = parseUnit(u.unit)
    const comparator = COMPARATORS[i % COMPARATORS.length]!
    return {
      build_id: build.id,
      key: `t${String(i).padStart(3, '0')}`,
      name: `Target ${i}`,
      unit: unit.unit,
      quantity: unit.quantity,
      comparator,
      threshold: toSI(u.base, unit),
      threshold_high: comparator === 'between' ? toSI(u.base + 4 * u.spread, unit) : null,
      noise_band: diffToSI(u.spread / 2, unit),
      position: i,
    }
  })
  const insertedTargets: { id: string, key: string }[] = []
  for (let i = 0; i < targetRows.length; i += 500) {
    insertedTargets.push(...await db('targets').insert(targetRows.slice(i, i + 500)).returning(['id', 'key']))
  }
  const revisionRows = Array.from({ length: revisions }, (_, j) => ({ build_id: build.id, label: `R${j + 1}`, seq: j + 1, changes: JSON.stringify([`Change ${j + 1}`]) }))
  const insertedRevisions: { id: string, seq: number }[] = []
  for (let j = 0; j < revisionRows.length; j += 1000) {
    insertedRevisions.push(...await db('revisions').insert(revisionRows.slice(j, j + 1000)).returning(['id', 'seq']))
  }
  insertedRevisions.sort((a, b) => a.seq - b.seq)
  await db.raw(`UPDATE revisions r SET parent_id = p.id FROM revisions p
    WHERE r.build_id = ? AND p.build_id = r.build_id AND p.seq = r.seq - 1`, [build.id])

  const readings: Record<string, unknown>[] = []
  const cells: CellRow[] = []
  targetRows.forEach((t, i) => {
    const u = UNITS[i % UNITS.length]!
    const entered = parseUnit(u.entered)
    const display = parseUnit(u.unit)
    const target: CellTarget = { id: insertedTargets[i]!.id, buildId: build.id, comparator: t.comparator, threshold: t.threshold, thresholdHigh: t.threshold_high, noiseBand: t.noise_band }
    const resolutionSI = diffToSI(u.spread / 10, display)
    const pooled = insertedRevisions.map((r, j) => {
      // a slow drift with steps now and then, in the display unit, entered in another unit
      const level = u.base + u.spread * (Math.sin(j / 9 + i) * 2 + (rnd() < 0.1 ? 3 : 0))
      const valuesDisplay = Array.from({ length: samples }, () => level + (rnd() - 0.5) * u.spread)
      const valuesSI = valuesDisplay.map(v => toSI(v, display))
      const valuesEntered = valuesSI.map(v => (v - entered.offset) / entered.factor)
      readings.push({
        target_id: target.id,
        revision_id: r.id,
        values_si: valuesSI,
        values_entered: valuesEntered,
        unit_entered: entered.unit,
        method: 'bench',
        resolution_si: resolutionSI,
        resolution_entered: resolutionSI / entered.factor,
        ...statsColumns(cellFromStats(computeStats(valuesSI, resolutionSI))),
        taken_by: ctx.userId,
      })
      return poolCell([{ values: valuesSI, resolution: resolutionSI }])
    })
    const decisions = decideCells(pooled, target)
    pooled.forEach((cell, j) => cells.push(cellRowOf(target, insertedRevisions[j]!.id, cell, decisions[j]!)))
  })
  for (let k = 0; k < readings.length; k += 2000) await db('readings').insert(readings.slice(k, k + 2000))
  for (let k = 0; k < cells.length; k += 2000) await db('cell_stats').insert(cells.slice(k, k + 2000))
  await db.raw('ANALYZE targets, revisions, readings, cell_stats')
  return build
}

/** The rows and columns the scoreboard reads, fetched by one plain SQL query. */
export const RAW_QUERY = `
  SELECT t.key, t.name, t.unit, t.comparator, t.threshold, t.threshold_high, t.stretch, t.noise_band, t.position,
         r.label, r.seq, c.target_id, c.revision_id, c.readings, c.n, c.mean, c.sd, c.u_a, c.u_b, c.u, c.nu_eff,
         c.ci_low, c.ci_high, c.status, c.delta, c.p, c.movement, c.real, c.reason
  FROM cell_stats c
  JOIN targets t ON t.id = c.target_id
  JOIN revisions r ON r.id = c.revision_id
  WHERE c.build_id = ? AND t.archived_at IS NULL
  ORDER BY t.position, r.seq`

// ---- boards

export const LANE_SHARE: [Lane, number][] = [['spotted', 0.35], ['traced', 0.15], ['bench', 0.15], ['retest', 0.1], ['closed', 0.2], ['parked', 0.05]]

/** A build with `n` findings spread over the lanes, with targets, fixes and comments, inserted in bulk. */
export async function seedBoard(ctx: Context, n: number) {
  const created = await http(ctx, 'POST', '/api/v1/builds', { team: ctx.teamSlug, name: `Board ${n}` })
  if (created.res.status !== 201) throw new Error(`build: ${created.res.status} ${created.text}`)
  const build = JSON.parse(created.text) as { id: string, slug: string }
  for (const [i, unit] of ['N', 'A', '°C', 'kg', 'km/h'].entries()) {
    const t = await http(ctx, 'POST', `/api/v1/builds/${build.slug}/targets`, { key: `t${i}`, name: `Target ${i}`, unit, comparator: 'atMost', threshold: 100 })
    if (t.res.status !== 201) throw new Error(`target: ${t.res.status} ${t.text}`)
  }
  for (let r = 1; r <= 6; r++) await http(ctx, 'POST', `/api/v1/builds/${build.slug}/revisions`, { label: `R${r}` })
  // every target Met on R6, so a card whose fix landed in R5 can close, verified
  for (const [i, unit] of ['N', 'A', '°C', 'kg', 'km/h'].entries()) {
    const r = await http(ctx, 'POST', `/api/v1/builds/${build.slug}/readings`, { revision: 'R6', target: `t${i}`, values: [50, 51, 49, 50.5], unit })
    if (r.res.status !== 201) throw new Error(`reading: ${r.res.status} ${r.text}`)
  }
  const ids = await addFindings(ctx, build, n)
  return { build, ids }
}

/** `n` findings on an existing build, spread over the lanes, linked to its targets, with fixes and comments. */
export async function addFindings(ctx: Context, build: { id: string }, n: number): Promise<{ id: string, lane: Lane }[]> {
  const { db } = ctx
  const targets = await db('targets').where({ build_id: build.id }).pluck('id') as string[]
  const revisions = await db('revisions').where({ build_id: build.id }).orderBy('seq').pluck('id') as string[]
  const rnd = random(n)
  const counts = LANE_SHARE.map(([lane, share]) => [lane, Math.round(share * n)] as const)
  const rows: Record<string, unknown>[] = []
  for (const [lane, count] of counts) {
    spreadRanks(count).forEach((rank, i) => rows.push({
      build_id: build.id,
      title: `Bench finding ${lane} ${i}: torque ripple above ${Math.round(rnd() * 400)} rpm`,
      description: 'Seen on the dyno. **Ripple** grows with case temperature; see the log.',
      severity: rnd() < 0.05 ? 'safety' : (['blocks-target', 'degrades', 'cosmetic'] as const)[Math.floor(rnd() * 3)],
      lane,
      rank,
      seen_on_revision_id: revisions[Math.floor(rnd() * 3)],
      closed_at: lane === 'closed' ? db.fn.now() : null,
      created_by: ctx.userId,
    }))
  }
  const ids: { id: string, lane: Lane }[] = []
  for (let k = 0; k < rows.length; k += 1000) ids.push(...await db('findings').insert(rows.slice(k, k + 1000)).returning(['id', 'lane']))
  const links = ids.filter(() => rnd() < 0.4).map(f => ({ finding_id: f.id, target_id: targets[Math.floor(rnd() * targets.length)] }))
  const fixes = ids.flatMap((f) => {
    // every card in Retest or Closed has a landed fix; some others too, so they may enter Retest
    const landed = f.lane === 'retest' || f.lane === 'closed' || rnd() < 0.15
    if (!landed && rnd() < 0.5) return []
    return [{ finding_id: f.id, description: 'Stiffer motor mount', owner_id: ctx.userId, due_on: '2027-03-01', state: landed ? 'landed' : 'in-progress', landed_revision_id: landed ? revisions[4] : null }]
  })
  const comments = ids.filter(() => rnd() < 0.3).map(f => ({ finding_id: f.id, author_id: ctx.userId, body: 'Seen again on the ramp.' }))
  for (let k = 0; k < links.length; k += 2000) await db('finding_targets').insert(links.slice(k, k + 2000)).onConflict(['finding_id', 'target_id']).ignore()
  for (let k = 0; k < fixes.length; k += 2000) await db('fixes').insert(fixes.slice(k, k + 2000))
  for (let k = 0; k < comments.length; k += 2000) await db('finding_comments').insert(comments.slice(k, k + 2000))
  await db.raw('ANALYZE findings, finding_targets, fixes, finding_comments')
  return ids
}

/** The rows of the board, by the same statements the board request runs, side by side, from this process. */
export async function rawBoard(db: Knex, buildId: string, teamId: string) {
  const [findings] = await Promise.all([
    db.raw(`SELECT f.id, f.title, f.lane, f.severity, f.rank, f.version, s.label AS seen_label, s.seq AS seen_seq, f.description
      FROM findings f LEFT JOIN revisions s ON s.id = f.seen_on_revision_id WHERE f.build_id = ?
      ORDER BY array_position(ARRAY['spotted','traced','bench','retest','closed','parked']::text[], f.lane::text), (f.severity <> 'safety'), f.rank`, [buildId]),
    db.raw(`SELECT ft.finding_id, t.id, t.key FROM finding_targets ft JOIN findings f ON f.id = ft.finding_id JOIN targets t ON t.id = ft.target_id
      WHERE f.build_id = ? ORDER BY t.position, t.key`, [buildId]),
    db.raw(`SELECT x.finding_id, x.state, x.owner_id, u.name AS owner_name, to_char(x.due_on, 'YYYY-MM-DD') AS due_on, lr.label AS landed_label, lr.seq AS landed_seq
      FROM fixes x JOIN findings f ON f.id = x.finding_id LEFT JOIN users u ON u.id = x.owner_id LEFT JOIN revisions lr ON lr.id = x.landed_revision_id
      WHERE f.build_id = ? ORDER BY x.created_at, x.id`, [buildId]),
    db.raw(`SELECT c.finding_id, count(*)::int AS n FROM finding_comments c JOIN findings f ON f.id = c.finding_id WHERE f.build_id = ? GROUP BY c.finding_id`, [buildId]),
    db.raw('SELECT id, label, seq FROM revisions WHERE build_id = ? ORDER BY seq', [buildId]),
    db.raw('SELECT revision_id, target_id, status FROM cell_stats WHERE build_id = ?', [buildId]),
    db.raw('SELECT u.id, u.name, u.email FROM memberships m JOIN users u ON u.id = m.user_id WHERE m.team_id = ? ORDER BY u.name', [teamId]),
    db.raw('SELECT * FROM targets WHERE build_id = ?', [buildId]),
  ])
  return findings.rows.length as number
}
