import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { addReading, expectRefused, expectRelClose, newRevision, newTarget, snapshot } from '../support/measure'

// Derived targets through the API: a formula over other targets' keys, evaluated per revision
// from the inputs' pooled means with the uncertainty propagated to first order.
//
// The expected numbers are computed here from the published formulas, not by the server's code:
// - a reading's u: uA = sd/√n, uB = δ/√12 (GUM JCGM 100:2008 4.2.3 and F.2.2.1), u = √(uA² + uB²);
//   its ν_eff by Welch–Satterthwaite with uB's ν infinite (GUM G.4.1, eq. G.2b);
// - E = ½mv²: (u_E/E)² = (u_m/m)² + (2u_v/v)² (GUM 5.1.6, relative form for a product of powers);
// - ν_eff of E: eq. G.2b over the terms E·u_m/m and E·2u_v/v;
// - with Type B inputs only, the 95 % interval is E ± 1.959964·u_E (normal quantile; GUM G.3.2:
//   t for ν = ∞);
// - a change of a derived target is real when |Δ| > 2·√(u₁² + u₂²) (docs/computation.md
//   §Movement between revisions, rule 1).
// Unit definitions: 1 km/h = 1000/3600 m/s, 1 g = 0.001 kg (SI Brochure, 9th ed.).
const Z_975 = 1.959963984540054

function stats(xs: number[], resolution: number) {
  const n = xs.length
  const mean = xs.reduce((a, b) => a + b, 0) / n
  const uB = resolution / Math.sqrt(12)
  if (n === 1) return { mean, u: uB, nu: Infinity }
  const sd = Math.sqrt(xs.reduce((a, x) => a + (x - mean) ** 2, 0) / (n - 1))
  const uA = sd / Math.sqrt(n)
  const u = Math.hypot(uA, uB)
  return { mean, u, nu: u ** 4 / (uA ** 4 / (n - 1)) }
}

function energy(m: { mean: number, u: number, nu: number }, v: { mean: number, u: number, nu: number }) {
  const E = 0.5 * m.mean * v.mean ** 2
  const tm = E * m.u / m.mean
  const tv = E * 2 * v.u / v.mean
  const u = Math.hypot(tm, tv)
  const nu = u ** 4 / ((Number.isFinite(m.nu) ? tm ** 4 / m.nu : 0) + (Number.isFinite(v.nu) ? tv ** 4 / v.nu : 0))
  return { E, u, nu }
}

function queriesOf(res: { headers: Headers }): number {
  const m = /queries=(\d+)/.exec(res.headers.get('server-timing') ?? '')
  if (!m) throw new Error('no Server-Timing query count')
  return Number(m[1])
}

describe('derived targets', () => {
  let w: World
  let slug: string
  let buildId: string
  const R2_MASS_G = [2490, 2510, 2500, 2505]
  const R2_SPEED_KMH = [43.2, 43.5, 43.0, 43.4]

  beforeAll(async () => {
    w = await makeWorld()
    const c = w.engineer.client
    const b = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Launcher' })).body
    slug = b.slug
    buildId = b.id
    await newTarget(c, slug, { key: 'payload_mass', name: 'Payload mass', unit: 'kg', comparator: 'atLeast', threshold: 2 })
    await newTarget(c, slug, { key: 'exit_speed', name: 'Exit speed', unit: 'm/s', comparator: 'atLeast', threshold: 10 })
    await newTarget(c, slug, { key: 'climb', name: 'Climb rate', unit: 'm/s', comparator: 'atLeast', threshold: 40 })
    for (const label of ['R1', 'R2', 'R3']) await newRevision(c, slug, label)
    const read = (revision: string, target: string, values: number[], unit: string, resolution?: number) =>
      addReading(c, slug, { revision, target, values, unit, resolution })
    await read('R1', 'payload_mass', [2.5], 'kg', 0.01)
    await read('R1', 'exit_speed', [12], 'm/s', 0.1)
    await read('R2', 'payload_mass', R2_MASS_G, 'g', 1)
    await read('R2', 'exit_speed', R2_SPEED_KMH, 'km/h', 0.1)
    await read('R3', 'payload_mass', [2.52, 2.53], 'kg', 0.01)
    // a straight line 30, 32, 34 for the forecast
    await read('R1', 'climb', [30], 'm/s')
    await read('R2', 'climb', [32], 'm/s')
    await read('R3', 'climb', [34], 'm/s')
  })
  afterAll(closeTestDb)

  const board = async () => (await w.reviewer.client.get(`/api/v1/builds/${slug}/scoreboard`)).body
  const targetOf = (b: any, key: string) => b.targets.find((t: { key: string }) => t.key === key)

  it('POST takes a formula; the target answers derived: true with its formula', async () => {
    const res = await w.engineer.client.post(`/api/v1/builds/${slug}/targets`, {
      key: 'kinetic_energy', name: 'Kinetic energy', unit: 'J', comparator: 'atLeast', threshold: 150, formula: '0.5 * payload_mass * exit_speed^2',
    })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    expect(res.body).toMatchObject({ key: 'kinetic_energy', derived: true, formula: '0.5 * payload_mass * exit_speed^2', quantity: 'energy', caution: true })
    const list = (await w.reviewer.client.get(`/api/v1/builds/${slug}/targets`)).body
    expect(list.find((t: { key: string }) => t.key === 'payload_mass')).toMatchObject({ derived: false, formula: null })
    expect(list.find((t: { key: string }) => t.key === 'kinetic_energy')).toMatchObject({ derived: true })
  })

  it('E = ½mv² with Type B inputs only: value, u (GUM 5.1.6) and the interval E ± 1.96·u', async () => {
    const e = targetOf(await board(), 'kinetic_energy')
    const r1 = e.history.find((h: { revision: string }) => h.revision === 'R1')
    const want = energy(stats([2.5], 0.01), stats([12], 0.1))
    expectRelClose(r1.mean, 180, 1e-12) // ½·2.5·12²
    expectRelClose(r1.mean, want.E, 1e-12)
    expectRelClose(r1.u, want.u, 1e-10)
    expect(r1.nuEff).toBeNull() // infinite: JSON has no Infinity
    expectRelClose(r1.ci95[0], want.E - Z_975 * want.u, 1e-10)
    expectRelClose(r1.ci95[1], want.E + Z_975 * want.u, 1e-10)
    expect(r1).toMatchObject({ n: 0, readings: 0, sd: null, status: 'met' })
  })

  it('samples in g and km/h: value, u and ν_eff match the closed forms (GUM 5.1.6, G.4.1)', async () => {
    const e = targetOf(await board(), 'kinetic_energy')
    const r2 = e.history.find((h: { revision: string }) => h.revision === 'R2')
    const m = stats(R2_MASS_G.map(g => g / 1000), 0.001)
    const v = stats(R2_SPEED_KMH.map(x => x * 1000 / 3600), 0.1 * 1000 / 3600)
    const want = energy(m, v)
    expectRelClose(r2.mean, want.E, 1e-12)
    expectRelClose(r2.u, want.u, 1e-9)
    expectRelClose(r2.nuEff, want.nu, 1e-9)
    // finite ν: the coverage factor is Student's t, above the normal 1.96
    const half = (r2.ci95[1] - r2.ci95[0]) / 2
    expectRelClose((r2.ci95[0] + r2.ci95[1]) / 2, want.E, 1e-12)
    expect(half / r2.u).toBeGreaterThan(Z_975)
    // the budget: each input's term of u and its share of u²
    const byKey = Object.fromEntries(r2.budget.map((b: { key: string }) => [b.key, b]))
    expectRelClose(byKey.payload_mass.contribution, want.E * m.u / m.mean, 1e-9)
    expectRelClose(byKey.exit_speed.contribution, want.E * 2 * v.u / v.mean, 1e-9)
    expectRelClose(byKey.payload_mass.share + byKey.exit_speed.share, 1, 1e-12)
    expect(byKey.payload_mass).toMatchObject({ unit: 'kg' })
  })

  it('movement by |Δ| > 2·√(u₁² + u₂²), with no p', async () => {
    const e = targetOf(await board(), 'kinetic_energy')
    const [r1, r2] = e.history
    const real = Math.abs(r2.mean - r1.mean) > 2 * Math.hypot(r1.u, r2.u)
    expect(r2).toMatchObject({ reason: 'uncertainty', p: null, real })
    expectRelClose(r2.delta, r2.mean - r1.mean, 1e-9)
    expect(r2.movement).toBe(real ? (r2.delta > 0 ? 'gained' : 'slipped') : 'steady')
  })

  it('a revision where an input has no reading says "can\'t evaluate" and why', async () => {
    const e = targetOf(await board(), 'kinetic_energy')
    expect(e.history.map((h: { revision: string }) => h.revision)).toEqual(['R1', 'R2'])
    expect(e.cantEvaluate).toEqual([{ revision: 'R3', reason: 'No reading of "exit_speed" on this revision' }])
    const detail = await w.reviewer.client.get(`/api/v1/builds/${slug}/targets/kinetic_energy`)
    expect(detail.status).toBe(200)
    expect(detail.body.inputs.map((i: { key: string }) => i.key)).toEqual(['payload_mass', 'exit_speed'])
    expect(detail.body.cantEvaluate).toEqual(e.cantEvaluate)
    const r3 = await w.reviewer.client.get(`/api/v1/builds/${slug}/revisions/R3`)
    expect(r3.status).toBe(200)
    expect(r3.body.targets.find((t: { key: string }) => t.key === 'kinetic_energy')).toMatchObject({ stats: null, cantEvaluate: 'No reading of "exit_speed" on this revision' })
  })

  it('a derived target takes no readings: 409, nothing saved', async () => {
    await expectRefused(buildId, 409, () => w.engineer.client.post(`/api/v1/builds/${slug}/readings`, {
      revision: 'R3', target: 'kinetic_energy', values: [170, 171], unit: 'J',
    }), /derived.*no readings/)
  })

  it.each([
    ['an unknown key, named', { formula: '0.5 * payload_mass * launch_speed^2' }, 422, /"launch_speed".*not a target of this build/],
    ['a syntax error, with the parser\'s message', { formula: '0.5 * payload_mass *' }, 400, /^formula: The formula has a syntax error/],
    ['a result of another quantity, naming both', { unit: 'W', formula: '0.5 * payload_mass * exit_speed^2' }, 422, /gives torque \(N·m\) or energy \(J\) but this target is measured in power \(W\)$/],
    ['a formula on its own key', { key: 'self_ref', formula: 'self_ref * 2' }, 422, /"self_ref" uses "self_ref" itself/],
    ['a formula without a key', { formula: '2 * 3' }, 400, /uses no target key/],
    ['a function not allowed', { formula: 'max(payload_mass, 1)' }, 400, /can't contain the function max\(\)/],
  ])('POST refuses %s, nothing saved', async (_case, over, status, message) => {
    const res = await expectRefused(buildId, status, () => w.engineer.client.post(`/api/v1/builds/${slug}/targets`, {
      key: 'bad_formula', name: 'Bad', unit: 'J', comparator: 'atLeast', threshold: 1, ...over,
    }), message)
    expect(res.body.data.fields.formula).toBeTruthy()
  })

  it('the unknown key is named in data.keys too', async () => {
    const res = await w.engineer.client.post(`/api/v1/builds/${slug}/targets`, {
      key: 'bad_formula', name: 'Bad', unit: 'J', comparator: 'atLeast', threshold: 1, formula: 'launch_speed * payload_mass * exit_speed',
    })
    expect(res.status).toBe(422)
    expect(res.body.data).toMatchObject({ code: 'unknown-key', keys: ['launch_speed'] })
  })

  it('PATCH refuses a formula that closes a circle, naming the path; nothing changes', async () => {
    await newTarget(w.engineer.client, slug, { key: 'mass_twice', name: 'Twice the mass', unit: 'kg', comparator: 'atLeast', threshold: 1, formula: 'payload_mass * 2' })
    await newTarget(w.engineer.client, slug, { key: 'mass_six', name: 'Six times the mass', unit: 'kg', comparator: 'atLeast', threshold: 1, formula: 'mass_twice * 3' })
    const res = await expectRefused(buildId, 422, () => w.engineer.client.patch(`/api/v1/builds/${slug}/targets/mass_twice`, { formula: 'mass_six / 3' }), /circle/)
    expect(res.body.message).toMatch(/mass_six → mass_twice → mass_six|mass_twice → mass_six → mass_twice/)
    expect(res.body.data).toMatchObject({ code: 'cycle' })
    expect((await testDb()('targets').where({ build_id: buildId, key: 'mass_twice' }).first()).formula).toBe('payload_mass * 2')
  })

  it('a derived target of a derived target carries the value and its u (GUM eq. 10, c = 3)', async () => {
    const b = await board()
    const two = targetOf(b, 'mass_twice').history.find((h: { revision: string }) => h.revision === 'R2')
    const six = targetOf(b, 'mass_six').history.find((h: { revision: string }) => h.revision === 'R2')
    const m = stats(R2_MASS_G.map(g => g / 1000), 0.001)
    expectRelClose(two.mean, 2 * m.mean, 1e-12)
    expectRelClose(two.u, 2 * m.u, 1e-10)
    expectRelClose(six.mean, 6 * m.mean, 1e-12)
    expectRelClose(six.u, 6 * m.u, 1e-10)
  })

  it('PATCH refuses a formula on a target that has readings of its own (409), and accepts dropping one', async () => {
    await expectRefused(buildId, 409, () => w.engineer.client.patch(`/api/v1/builds/${slug}/targets/payload_mass`, { formula: 'exit_speed * 1' }), /has readings of its own/)
    const off = await w.engineer.client.patch(`/api/v1/builds/${slug}/targets/mass_six`, { formula: null })
    expect(off.status).toBe(200)
    expect(off.body).toMatchObject({ derived: false, formula: null })
    const on = await w.engineer.client.patch(`/api/v1/builds/${slug}/targets/mass_six`, { formula: 'payload_mass * 6' })
    expect(on.status).toBe(200)
    expect(on.body).toMatchObject({ derived: true, formula: 'payload_mass * 6' })
  })

  it('the forecast: a straight line through 30, 32, 34 meets 40 three revisions on (at R6)', async () => {
    // least squares through (0, 30), (1, 32), (2, 34) is exactly y = 30 + 2x; y = 40 at x = 5,
    // the sixth revision — past R3, so its label is read on from R3
    const climb = targetOf(await board(), 'climb')
    expect(climb.forecast).toMatchObject({ status: 'converging', n: 3, crossesAfterLast: 3, crossesAt: 'R6', caveat: 'a straight line through 3 points' })
    expectRelClose(climb.forecast.slope, 2, 1e-12)
    expect(targetOf(await board(), 'kinetic_energy').forecast).toMatchObject({ status: 'not-enough-data', n: 2 })
  })

  it('the scoreboard keeps a fixed number of SQL queries with derived targets', async () => {
    const plain = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Plain board' })).body.slug
    await newTarget(w.engineer.client, plain, { key: 'only' })
    await newRevision(w.engineer.client, plain, 'R1')
    await addReading(w.engineer.client, plain, { revision: 'R1', target: 'only', values: [11, 12], unit: 'N' })
    const without = await w.reviewer.client.get(`/api/v1/builds/${plain}/scoreboard`)
    const withDerived = await w.reviewer.client.get(`/api/v1/builds/${slug}/scoreboard`)
    expect(withDerived.body.targets.filter((t: { derived: boolean }) => t.derived).length).toBeGreaterThanOrEqual(3)
    expect(queriesOf(withDerived)).toBe(queriesOf(without))
  })
})

describe('a derived target that divides by zero on a revision', () => {
  let w: World
  let slug: string
  beforeAll(async () => {
    w = await makeWorld()
    const c = w.engineer.client
    slug = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Lever' })).body.slug
    await newTarget(c, slug, { key: 'travel', name: 'Travel', unit: 'mm', comparator: 'atLeast', threshold: 1 })
    await newTarget(c, slug, { key: 'gap', name: 'Gap', unit: 'mm', comparator: 'atLeast', threshold: 0 })
    await newTarget(c, slug, { key: 'ratio', name: 'Travel over gap', unit: '%', comparator: 'atLeast', threshold: 100, formula: 'travel / gap' })
    for (const label of ['R1', 'R2']) await newRevision(c, slug, label)
    for (const [revision, travel, gap] of [['R1', [5.0, 5.2], [2.0, 2.2]], ['R2', [5.1, 5.3], [0, 0]]] as const) {
      await addReading(c, slug, { revision, target: 'travel', values: travel, unit: 'mm' })
      await addReading(c, slug, { revision, target: 'gap', values: gap, unit: 'mm' })
    }
  })
  afterAll(closeTestDb)

  it('shows "can\'t evaluate" for that revision on every page, never a 500', async () => {
    const board = await w.reviewer.client.get(`/api/v1/builds/${slug}/scoreboard`)
    expect(board.status).toBe(200)
    const ratio = board.body.targets.find((t: { key: string }) => t.key === 'ratio')
    // R1: 5.1 mm / 2.1 mm = 242.857… %
    expectRelClose(ratio.history[0].mean, 5.1 / 2.1 * 100, 1e-12)
    expect(ratio.history).toHaveLength(1)
    expect(ratio.cantEvaluate).toHaveLength(1)
    expect(ratio.cantEvaluate[0].revision).toBe('R2')
    expect(ratio.cantEvaluate[0].reason).toMatch(/division by zero/)
    expect(ratio.status).toBe('met')
    for (const path of [`/api/v1/builds/${slug}/targets/ratio`, `/api/v1/builds/${slug}/revisions/R2`, `/api/v1/builds/${slug}/compare?a=R1&b=R2`]) {
      const res = await w.reviewer.client.get(path)
      expect(res.status, path).toBe(200)
    }
    const cmp = (await w.reviewer.client.get(`/api/v1/builds/${slug}/compare?a=R1&b=R2`)).body
    expect(cmp.targets.find((t: { target: { key: string } }) => t.target.key === 'ratio')).toMatchObject({ delta: null, movement: null, note: expect.stringMatching(/^Can't evaluate on R2: .*division by zero/) })
  })

  it('the stored data is untouched by reading it', async () => {
    const id = (await testDb()('builds').where({ slug }).first('id')).id
    const before = await snapshot(id)
    await w.reviewer.client.get(`/api/v1/builds/${slug}/scoreboard`)
    expect(await snapshot(id)).toEqual(before)
  })
})

describe('digest events of a derived target', () => {
  let w: World
  let slug: string
  beforeAll(async () => {
    w = await makeWorld()
    const c = w.engineer.client
    slug = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Hub' })).body.slug
    await newTarget(c, slug, { key: 'torque', name: 'Torque', unit: 'N·m', comparator: 'atLeast', threshold: 1 })
    await newTarget(c, slug, { key: 'speed', name: 'Speed', unit: 'rad/s', comparator: 'atLeast', threshold: 1 })
    await newTarget(c, slug, { key: 'power', name: 'Power', unit: 'W', comparator: 'atLeast', threshold: 200, formula: 'torque * speed' })
    for (const label of ['R1', 'R2']) await newRevision(c, slug, label)
  })
  afterAll(closeTestDb)

  const powerEvents = async () => ((await w.reviewer.client.get(`/api/v1/builds/${slug}/events`)).body as { type: string, target?: string, revision?: string }[])
    .filter(e => e.target === 'power')

  it('a reading of an input that makes it Met records target.met for it, once', async () => {
    const c = w.engineer.client
    // R1: 18 N·m × 10 rad/s = 180 W, short of 200 W
    await addReading(c, slug, { revision: 'R1', target: 'torque', values: [17.9, 18.0, 18.1], unit: 'N·m' })
    await addReading(c, slug, { revision: 'R1', target: 'speed', values: [9.99, 10.0, 10.01], unit: 'rad/s' })
    expect(await powerEvents()).toEqual([])
    // R2: 25 N·m × 10 rad/s = 250 W, Met once both inputs are read
    await addReading(c, slug, { revision: 'R2', target: 'torque', values: [24.9, 25.0, 25.1], unit: 'N·m' })
    expect(await powerEvents()).toEqual([])
    await addReading(c, slug, { revision: 'R2', target: 'speed', values: [9.99, 10.0, 10.01], unit: 'rad/s' })
    const after = await powerEvents()
    expect(after.map(e => [e.type, e.revision])).toEqual([['target.met', 'R2']])
    // another reading that leaves it Met records nothing new
    await addReading(c, slug, { revision: 'R2', target: 'speed', values: [10.0], unit: 'rad/s' })
    expect(await powerEvents()).toHaveLength(1)
  })

  it('editing its rule records the change it makes: slipped above 250 W, Met again below', async () => {
    const c = w.engineer.client
    const edit = async (threshold: number) => {
      const res = await c.patch(`/api/v1/builds/${slug}/targets/power`, { threshold })
      expect(res.status, JSON.stringify(res.body)).toBe(200)
    }
    await edit(300)
    expect((await powerEvents()).map(e => [e.type, e.revision])).toEqual([['target.slipped', 'R2'], ['target.met', 'R2']])
    // a rule change that moves nothing records nothing
    await edit(320)
    expect(await powerEvents()).toHaveLength(2)
    await edit(200)
    expect((await powerEvents()).map(e => [e.type, e.revision])).toEqual([['target.met', 'R2'], ['target.slipped', 'R2'], ['target.met', 'R2']])
  })
})
