// The soak for `npm run soak` (started by scripts/soak.sh, which provides a scratch database in
// DATABASE_URL, maildev and the built server). 50 signed-in keep-alive connections of mixed reads
// and writes run for 60 s; 20 s in, PostgreSQL is restarted under load; 35 s in, maildev is
// stopped (an SMTP outage) and 50 s in started again. Then it prints requests/s, p50/p99, the
// answers by status, the acknowledged writes missing from the database and the e-mails delivered
// other than exactly once. Both counts must be 0 (exit code 1 otherwise). Loopback only; bounded
// in time (load 60 s, waiting for the e-mail queue at most 150 s) and connections (50).

import { execFileSync, spawn } from 'node:child_process'
import { randomBytes } from 'node:crypto'
import { performance } from 'node:perf_hooks'
import knex from 'knex'
import { knexConfig } from '../knexfile'

const BASE_URL = process.env.RATCHET_SOAK_BASE_URL ?? 'http://127.0.0.1:3220'
const MAILDEV_URL = process.env.RATCHET_SOAK_MAILDEV_URL ?? 'http://127.0.0.1:1190'
const CONNECTIONS = Number(process.env.RATCHET_SOAK_CONNECTIONS ?? 50)
const SECONDS = Number(process.env.RATCHET_SOAK_SECONDS ?? 60)
const PG_RESTART_AT = SECONDS / 3
const SMTP_DOWN_AT = SECONDS * 35 / 60
const SMTP_UP_AT = SECONDS * 50 / 60
const MAIL_WAIT_MS = 150_000
const ROOT = new URL('..', import.meta.url).pathname

for (const url of [BASE_URL, MAILDEV_URL]) {
  const host = new URL(url).hostname
  if (host !== '127.0.0.1' && host !== 'localhost' && host !== '::1') throw new Error(`the soak runs on loopback only, not ${host}`)
}

const db = knex(knexConfig(process.env.DATABASE_URL!))
const sleep = (ms: number) => new Promise(r => setTimeout(r, ms))
const started = performance.now()
const at = () => ((performance.now() - started) / 1000).toFixed(1)
const log = (msg: string) => console.log(`[${at()} s] ${msg}`)

/** The fields of the API's answers the soak reads (JSON, as the server sent it). */
interface Answer {
  id: string
  slug: string
  lane: string
  version: number
  user: { id: string }
  reading?: { id: string }
  finding?: Answer
  [key: string]: unknown
}

async function call(cookie: string, method: string, path: string, body?: unknown) {
  const headers: Record<string, string> = { cookie }
  if (body !== undefined) headers['content-type'] = 'application/json'
  const res = await fetch(`${BASE_URL}${path}`, { method, headers, body: body === undefined ? undefined : JSON.stringify(body) })
  const text = await res.text()
  // an empty or non-JSON answer reads as an object without fields
  let json = {} as Answer
  try { json = text ? JSON.parse(text) as Answer : json }
  catch { /* not JSON */ }
  return { status: res.status, body: json, setCookie: res.headers.getSetCookie() }
}

async function signUp(name: string) {
  const email = `${name.toLowerCase().replace(/\W/g, '.')}.${randomBytes(3).toString('hex')}@soak.example`
  const res = await call('', 'POST', '/api/auth/signup', { name, email, password: 'bench-press-7731' })
  if (res.status !== 201) throw new Error(`sign-up: ${res.status} ${JSON.stringify(res.body)}`)
  const cookie = res.setCookie.map(c => c.split(';')[0]).join('; ')
  return { cookie, email, user: res.body.user }
}

async function must(p: Promise<{ status: number, body: Answer }>, what: string) {
  const res = await p
  if (res.status >= 300) throw new Error(`${what}: ${res.status} ${JSON.stringify(res.body)}`)
  return res.body
}

// ---------------------------------------------------------------------------------------
// maildev: stopped and started again by this script (the first one was started by soak.sh)

let maildevPid = Number(process.env.RATCHET_SOAK_MAILDEV_PID)
let ownMaildev = false
function stopProcess(pid: number) {
  try { process.kill(-pid, 'SIGTERM') }
  catch {
    try { process.kill(pid, 'SIGTERM') }
    catch { /* gone */ }
  }
}
async function stopMaildev() {
  stopProcess(maildevPid)
  for (let i = 0; i < 50; i++) {
    try { process.kill(maildevPid, 0) }
    catch { return }
    await sleep(100)
  }
}
async function startMaildev() {
  const child = spawn(process.execPath, [`${ROOT}node_modules/maildev/dist/bin/maildev.js`,
    '--smtp', process.env.RATCHET_SOAK_SMTP_PORT!, '--ip', '127.0.0.1', '--web', process.env.RATCHET_SOAK_MAIL_WEB_PORT!,
    '--web-ip', '127.0.0.1', '--mail-directory', `${ROOT}.data/soak/mail`, '--silent'], { detached: true, stdio: 'ignore' })
  child.unref()
  maildevPid = child.pid!
  ownMaildev = true
  for (let i = 0; i < 100; i++) {
    if (await fetch(`${MAILDEV_URL}/api/healthz`).then(r => r.ok, () => false)) return
    await sleep(100)
  }
  throw new Error('maildev did not come back')
}

// ---------------------------------------------------------------------------------------

const LANES = ['spotted', 'traced', 'parked'] as const
type Op = 'scoreboard' | 'findings' | 'reading' | 'finding' | 'move' | 'comment'
const OPS: [Op, number][] = [['scoreboard', 30], ['findings', 25], ['reading', 20], ['finding', 10], ['move', 10], ['comment', 5]]

interface Stats {
  latencies: number[]
  byStatus: Map<string, number>
  byOp: Map<Op, number>
}

async function main() {
  log(`setting up on ${BASE_URL}`)
  const owner = await signUp('Sana Soak')
  const mentioned = await signUp('Mira Mention')
  const teams = await must(call(owner.cookie, 'GET', '/api/v1/teams'), 'teams')
  const team = (teams as unknown as { id: string, slug: string }[])[0]!
  // the second person joins the team directly (setup, not under test)
  await db('memberships').insert({ team_id: team.id, user_id: mentioned.user.id, role: 'engineer' })
  const build = await must(call(owner.cookie, 'POST', '/api/v1/builds', { team: team.slug, name: 'Soak rig, cargo trike hub' }), 'build')
  const b = build.slug
  await must(call(owner.cookie, 'POST', `/api/v1/builds/${b}/targets`, { key: 'wheel_torque', name: 'Continuous wheel torque', unit: 'N·m', comparator: 'atLeast', threshold: 40 }), 'target')
  await must(call(owner.cookie, 'POST', `/api/v1/builds/${b}/revisions`, { label: 'S1' }), 'revision')

  const stats: Stats = { latencies: [], byStatus: new Map(), byOp: new Map() }
  const acked = { readings: [] as string[], findings: [] as string[], comments: [] as { id: string, tag: string }[] }
  /** per finding: the lane of its last acknowledged move (each connection moves only its own) */
  const laneOf = new Map<string, string>()
  const deadline = performance.now() + SECONDS * 1000
  let seq = 0

  async function connection(k: number) {
    const mine: { id: string, version: number, lane: string }[] = []
    let rnd = k * 7919 + 1
    const next = () => {
      rnd = (rnd * 48271) % 2147483647
      return rnd / 2147483647
    }
    while (performance.now() < deadline) {
      let roll = next() * 100
      let op: Op = 'scoreboard'
      for (const [name, weight] of OPS) {
        if ((roll -= weight) < 0) {
          op = name
          break
        }
      }
      if ((op === 'move' || op === 'comment') && mine.length === 0) op = 'finding'
      const n = ++seq
      const t0 = performance.now()
      let status: string
      try {
        if (op === 'scoreboard') status = String((await call(owner.cookie, 'GET', `/api/v1/builds/${b}/scoreboard`)).status)
        else if (op === 'findings') status = String((await call(owner.cookie, 'GET', `/api/v1/builds/${b}/findings`)).status)
        else if (op === 'reading') {
          const values = Array.from({ length: 5 }, () => Number((40 + next() * 4).toFixed(2)))
          const res = await call(owner.cookie, 'POST', `/api/v1/builds/${b}/readings`, { revision: 'S1', target: 'wheel_torque', values, unit: 'N·m', resolution: 0.01 })
          status = String(res.status)
          if (res.status === 201) acked.readings.push(res.body.reading?.id ?? res.body.id)
        }
        else if (op === 'finding') {
          const res = await call(owner.cookie, 'POST', `/api/v1/builds/${b}/findings`, { title: `Hub runs warm, pass ${n}`, severity: 'degrades', seenOn: 'S1' })
          status = String(res.status)
          if (res.status === 201) {
            acked.findings.push(res.body.id)
            mine.push({ id: res.body.id, version: res.body.version, lane: res.body.lane })
            laneOf.set(res.body.id, res.body.lane)
          }
        }
        else if (op === 'move') {
          const f = mine[Math.floor(next() * mine.length)]!
          const lane = LANES.filter(l => l !== f.lane)[Math.floor(next() * 2)]!
          const res = await call(owner.cookie, 'POST', `/api/v1/findings/${f.id}/move`, { lane, version: f.version })
          status = String(res.status)
          const moved = res.body?.finding ?? res.body
          if (res.status === 200) {
            f.version = moved.version
            f.lane = moved.lane
            laneOf.set(f.id, moved.lane)
          }
          else if (res.status === 409 || res.status >= 500 || res.status === 0) {
            // a conflict or an answer lost: read the card again before the next move
            const fresh = await call(owner.cookie, 'GET', `/api/v1/findings/${f.id}`)
            if (fresh.status === 200) {
              f.version = fresh.body.version
              f.lane = fresh.body.lane
              laneOf.set(f.id, fresh.body.lane)
            }
          }
        }
        else {
          const f = mine[Math.floor(next() * mine.length)]!
          const tag = `soak-${n}-${randomBytes(3).toString('hex')}`
          const res = await call(owner.cookie, 'POST', `/api/v1/findings/${f.id}/comments`, { body: `@Mira the hub reads warm again (${tag})` })
          status = String(res.status)
          if (res.status === 201) acked.comments.push({ id: res.body.id, tag })
        }
      }
      catch (err) {
        status = `network (${(err as { cause?: { code?: string } }).cause?.code ?? (err as Error).message})`
        await sleep(50)
      }
      stats.latencies.push(performance.now() - t0)
      stats.byStatus.set(status, (stats.byStatus.get(status) ?? 0) + 1)
      stats.byOp.set(op, (stats.byOp.get(op) ?? 0) + 1)
    }
  }

  async function faults() {
    await sleep(PG_RESTART_AT * 1000)
    log('restarting PostgreSQL under load')
    execFileSync('bash', [`${ROOT}scripts/db.sh`, 'stop'], { stdio: 'ignore' })
    await sleep(2000)
    execFileSync('bash', [`${ROOT}scripts/db.sh`, 'start'], { stdio: 'ignore' })
    log('PostgreSQL is back')
    await sleep(Math.max(0, SMTP_DOWN_AT * 1000 - (performance.now() - started)))
    log('stopping maildev (SMTP outage)')
    await stopMaildev()
    await sleep(Math.max(0, SMTP_UP_AT * 1000 - (performance.now() - started)))
    await startMaildev()
    log('maildev is back')
  }

  log(`${CONNECTIONS} connections for ${SECONDS} s`)
  const loadStart = performance.now()
  await Promise.all([...Array.from({ length: CONNECTIONS }, (_, k) => connection(k)), faults()])
  const loadSeconds = (performance.now() - loadStart) / 1000
  log('load over; checking the database and waiting for the e-mail queue')

  // acknowledged writes that the database doesn't have
  const countIn = async (table: string, ids: string[]) => {
    let found = 0
    for (let i = 0; i < ids.length; i += 1000) found += Number((await db(table).whereIn('id', ids.slice(i, i + 1000)).count({ n: '*' }))[0]!.n)
    return ids.length - found
  }
  const missingReadings = await countIn('readings', acked.readings)
  const missingFindings = await countIn('findings', acked.findings)
  const missingComments = await countIn('finding_comments', acked.comments.map(c => c.id))
  const lanes = new Map<string, string>()
  const ids = [...laneOf.keys()]
  for (let i = 0; i < ids.length; i += 1000) {
    for (const r of await db('findings').whereIn('id', ids.slice(i, i + 1000)).select('id', 'lane')) lanes.set(r.id, r.lane)
  }
  const wrongLanes = ids.filter(id => lanes.has(id) && lanes.get(id) !== laneOf.get(id)).length

  // every acknowledged comment's mention sent: wait for the queue, then count the e-mails
  const waitUntil = performance.now() + MAIL_WAIT_MS
  let pending = -1
  while (performance.now() < waitUntil) {
    pending = Number((await db('mention_notices').whereNull('sent_at').count({ n: '*' }))[0]!.n)
    if (pending === 0) break
    await sleep(1000)
  }
  await sleep(3000) // a late duplicate would show here
  const mail = await (await fetch(`${MAILDEV_URL}/api/email`)).json() as { subject: string, text?: string, to: { address: string }[] }[]
  const toMentioned = mail.filter(m => m.to.some(t => t.address.toLowerCase() === mentioned.email.toLowerCase()))
  const byTag = new Map<string, number>()
  for (const m of toMentioned) {
    const tag = /soak-\d+-[0-9a-f]{6}/.exec(m.text ?? '')?.[0]
    if (tag) byTag.set(tag, (byTag.get(tag) ?? 0) + 1)
  }
  const notOnce = acked.comments.filter(c => byTag.get(c.tag) !== 1)

  const sorted = [...stats.latencies].sort((a, b) => a - b)
  const q = (p: number) => sorted[Math.min(sorted.length - 1, Math.floor(p * (sorted.length - 1)))]!
  console.log('\n== soak figures')
  console.log(`requests: ${sorted.length} in ${loadSeconds.toFixed(1)} s over ${CONNECTIONS} connections = ${(sorted.length / loadSeconds).toFixed(0)} requests/s`)
  console.log(`latency: p50 ${q(0.5).toFixed(1)} ms, p99 ${q(0.99).toFixed(1)} ms, max ${sorted.at(-1)!.toFixed(1)} ms`)
  console.log(`by operation: ${[...stats.byOp].map(([k, v]) => `${k} ${v}`).join(', ')}`)
  console.log(`answers by status: ${[...stats.byStatus].sort().map(([k, v]) => `${k}: ${v}`).join(', ')}`)
  console.log(`acknowledged writes: ${acked.readings.length} readings, ${acked.findings.length} findings, ${laneOf.size} cards' lanes, ${acked.comments.length} comments`)
  const missing = missingReadings + missingFindings + missingComments + wrongLanes
  console.log(`acknowledged writes missing from the database: ${missing} (readings ${missingReadings}, findings ${missingFindings}, comments ${missingComments}, moves ${wrongLanes})`)
  console.log(`mention e-mails: ${toMentioned.length} delivered for ${acked.comments.length} acknowledged comments; notices still unsent: ${pending}`)
  console.log(`e-mails delivered other than exactly once: ${notOnce.length}${notOnce.length ? ` (${notOnce.slice(0, 5).map(c => `${c.tag}×${byTag.get(c.tag) ?? 0}`).join(', ')})` : ''}`)
  return missing === 0 && notOnce.length === 0
}

main()
  .then((ok) => { process.exitCode = ok ? 0 : 1 })
  .catch((err) => {
    console.error(err)
    process.exitCode = 1
  })
  .finally(async () => {
    await db.destroy()
    if (ownMaildev) stopProcess(maildevPid)
  })
