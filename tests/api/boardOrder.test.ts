import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { isValidRank } from '#shared/utils/rank'
import { closeTestDb, makeWorld, testDb, type Client, type World } from '../support/api'

// The order of the board survives any sequence of moves: the server's order equals what a plain
// list model of the same moves predicts, and each lane's ranks stay valid, unique and ordered.
// The lanes used have no entry rules (Retest and Closed are covered in findings.test.ts).

const LANES = ['spotted', 'traced', 'bench', 'parked'] as const
type Lane = typeof LANES[number]

interface Card { id: string, safety: boolean, version: number }

/** A small deterministic generator, so a failing sequence can be replayed. */
function lcg(seed: number) {
  let s = seed >>> 0
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0
    return s / 2 ** 32
  }
}

/** Lanes as rank-ordered lists of card ids, moved the way the API describes a move. */
class Model {
  lanes = new Map<Lane, string[]>(LANES.map(l => [l, []]))
  remove(id: string) {
    for (const list of this.lanes.values()) {
      const i = list.indexOf(id)
      if (i >= 0) list.splice(i, 1)
    }
  }

  insert(id: string, lane: Lane, at: number) {
    this.remove(id)
    this.lanes.get(lane)!.splice(at, 0, id)
  }

  /** The board's order: by lane, safety findings first, then rank order. */
  shown(cards: Map<string, Card>): string[] {
    return LANES.flatMap((l) => {
      const list = this.lanes.get(l)!
      return [...list.filter(id => cards.get(id)!.safety), ...list.filter(id => !cards.get(id)!.safety)]
    })
  }
}

async function serverOrder(c: Client, build: string) {
  const res = await c.get(`/api/v1/builds/${build}/findings`)
  expect(res.status).toBe(200)
  return res.body as { id: string, lane: Lane, rank: string, severity: string, version: number }[]
}

function expectValidRanks(rows: { lane: string, rank: string }[]) {
  for (const lane of LANES) {
    const ranks = rows.filter(r => r.lane === lane).map(r => r.rank)
    expect(ranks.every(isValidRank), `${lane}: ${ranks.join(' ')}`).toBe(true)
    expect(new Set(ranks).size).toBe(ranks.length)
  }
}

describe('the board’s order under random moves', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  async function arrange(n: number, name: string) {
    const b = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name })).body as { id: string, slug: string }
    const model = new Model()
    const cards = new Map<string, Card>()
    for (let i = 0; i < n; i++) {
      const safety = i % 7 === 3
      const res = await w.engineer.client.post(`/api/v1/builds/${b.slug}/findings`, { title: `Card ${i}`, severity: safety ? 'safety' : 'degrades' })
      expect(res.status).toBe(201)
      cards.set(res.body.id, { id: res.body.id, safety, version: 1 })
      model.insert(res.body.id, 'spotted', i)
    }
    return { b, model, cards }
  }

  it('300 random moves leave the order the model predicts, with valid ranks throughout', async () => {
    const { b, model, cards } = await arrange(24, 'Order test')
    const rnd = lcg(6_2026)
    const pick = <T>(xs: readonly T[]) => xs[Math.floor(rnd() * xs.length)]!
    const ids = [...cards.keys()]
    const kinds = { before: 0, after: 0, both: 0, end: 0 }
    for (let step = 1; step <= 300; step++) {
      const card = cards.get(pick(ids))!
      const lane = pick(LANES)
      const peers = model.lanes.get(lane)!.filter(id => id !== card.id)
      const at = Math.floor(rnd() * (peers.length + 1))
      const options: (keyof typeof kinds)[] = []
      if (at < peers.length) options.push('before')
      if (at > 0) options.push('after')
      if (at > 0 && at < peers.length) options.push('both')
      if (at === peers.length) options.push('end')
      const kind = pick(options)
      kinds[kind]++
      const body: Record<string, unknown> = { lane, version: card.version }
      if (kind === 'before' || kind === 'both') body.before = peers[at]
      if (kind === 'after' || kind === 'both') body.after = peers[at - 1]
      const res = await w.engineer.client.post(`/api/v1/findings/${card.id}/move`, body)
      expect(res.status, `step ${step}: ${JSON.stringify(res.body)}`).toBe(200)
      card.version = res.body.finding.version
      model.insert(card.id, lane, at)

      if (step % 50 === 0) {
        const rows = await serverOrder(w.reviewer.client, b.slug)
        expect(rows.map(r => r.id), `after ${step} moves`).toEqual(model.shown(cards))
        expectValidRanks(rows)
      }
    }
    // every way of naming a place was exercised
    expect(Object.values(kinds).every(n => n > 10)).toBe(true)

    const rows = await serverOrder(w.reviewer.client, b.slug)
    expect(rows.map(r => r.id)).toEqual(model.shown(cards))
    // within each lane the ranks follow the model's order strictly
    for (const lane of LANES) {
      const rank = new Map(rows.map(r => [r.id, r.rank]))
      const ranks = model.lanes.get(lane)!.map(id => rank.get(id)!)
      for (let i = 1; i < ranks.length; i++) expect(ranks[i - 1]! < ranks[i]!, `${lane} ${ranks[i - 1]} < ${ranks[i]}`).toBe(true)
    }
    // the database agrees with the answers (byte order, "C" collation)
    const db = await testDb()('findings').where({ build_id: b.id }).orderByRaw(`lane, rank`).select('id', 'lane', 'rank')
    for (const lane of LANES) expect(db.filter(r => r.lane === lane).map(r => r.id)).toEqual(model.lanes.get(lane))
  })

  it('moves only write the moved card: the rest of the lane keeps its ranks', async () => {
    const { b, cards } = await arrange(6, 'One row per move')
    const before = await serverOrder(w.reviewer.client, b.slug)
    const [first, , third] = before
    const res = await w.engineer.client.post(`/api/v1/findings/${first!.id}/move`, { lane: 'spotted', after: third!.id, version: cards.get(first!.id)!.version })
    expect(res.body.respread).toBe(false)
    const after = await serverOrder(w.reviewer.client, b.slug)
    const changed = after.filter(r => before.find(x => x.id === r.id)!.rank !== r.rank).map(r => r.id)
    expect(changed).toEqual([first!.id])
  })

  it('many moves into the same gap eventually re-spread the lane, and keep the order', async () => {
    const { b, model, cards } = await arrange(4, 'Same gap')
    const [anchor, x, y] = model.lanes.get('spotted')!
    let respread = 0
    for (let i = 0; i < 320; i++) {
      // x and y take turns just below the anchor: each move halves the same gap
      const card = cards.get(i % 2 ? y! : x!)!
      const res = await w.engineer.client.post(`/api/v1/findings/${card.id}/move`, { lane: 'spotted', after: anchor, version: card.version })
      expect(res.status).toBe(200)
      card.version = res.body.finding.version
      if (res.body.respread) respread++
      expect(res.body.finding.rank.length).toBeLessThanOrEqual(60)
      model.insert(card.id, 'spotted', 1)
    }
    expect(respread).toBeGreaterThan(0)
    const rows = await serverOrder(w.reviewer.client, b.slug)
    expect(rows.map(r => r.id)).toEqual(model.shown(cards))
    expectValidRanks(rows)
  })

  it('rounds of simultaneous moves next to cards that are moving too keep every lane valid', async () => {
    const { b, cards } = await arrange(12, 'Crossing moves')
    const rnd = lcg(11)
    for (let round = 0; round < 6; round++) {
      const rows = await serverOrder(w.reviewer.client, b.slug)
      const pick = [...rows].sort(() => rnd() - 0.5).slice(0, 6)
      const results = await Promise.all(pick.map((card) => {
        const lane: Lane = rnd() < 0.5 ? 'spotted' : 'traced'
        // a neighbour from the whole board: it may be moving in this round too
        const peers = rows.filter(r => r.lane === lane && r.id !== card.id)
        const neighbour = peers.length ? peers[Math.floor(rnd() * peers.length)]! : null
        const where = neighbour ? (rnd() < 0.5 ? { before: neighbour.id } : { after: neighbour.id }) : {}
        return w.engineer.client.post(`/api/v1/findings/${card.id}/move`, { lane, version: card.version, ...where })
      }))
      // each lands, or is refused because a neighbour moved first; never a server error
      for (const r of results) expect([200, 409], JSON.stringify(r.body)).toContain(r.status)
      expect(results.some(r => r.status === 200)).toBe(true)
      const after = await serverOrder(w.reviewer.client, b.slug)
      expect(after.map(r => r.id).sort()).toEqual([...cards.keys()].sort())
      expectValidRanks(after)
    }
  })

  it('simultaneous moves into one place of a lane all land, each with its own rank', async () => {
    const { b, cards } = await arrange(10, 'Simultaneous')
    const ids = [...cards.keys()]
    const target = ids[0]!
    const movers = ids.slice(1)
    const results = await Promise.all(movers.map(id => w.engineer.client.post(`/api/v1/findings/${id}/move`, { lane: 'bench', version: 1 })))
    expect(results.map(r => r.status)).toEqual(movers.map(() => 200))
    // to the end of another lane and back, all at once, a few times: the same rank over and over
    for (let round = 0; round < 4; round++) {
      const now = await serverOrder(w.reviewer.client, b.slug)
      const moved = await Promise.all(now.filter(r => movers.includes(r.id)).map(r =>
        w.engineer.client.post(`/api/v1/findings/${r.id}/move`, { lane: round % 2 ? 'bench' : 'parked', version: r.version })))
      expect(moved.map(r => r.status), JSON.stringify(moved.map(r => r.body.message))).toEqual(movers.map(() => 200))
    }
    const rows = await serverOrder(w.reviewer.client, b.slug)
    expectValidRanks(rows)
    expect(rows.filter(r => r.lane === 'bench')).toHaveLength(movers.length)
    // and the same again, all before one card
    const bench = rows.filter(r => r.lane === 'bench')
    const again = await Promise.all(bench.slice(1).map(r => w.engineer.client.post(`/api/v1/findings/${r.id}/move`, { lane: 'traced', version: r.version })))
    expect(again.every(r => r.status === 200)).toBe(true)
    const more = await Promise.all([target, bench[0]!.id].map(async (id) => {
      const v = rows.find(r => r.id === id)!.version
      return w.engineer.client.post(`/api/v1/findings/${id}/move`, { lane: 'traced', before: again[0]!.body.finding.id, version: v })
    }))
    expect(more.map(r => r.status)).toEqual([200, 200])
    expectValidRanks(await serverOrder(w.reviewer.client, b.slug))
  })
})
