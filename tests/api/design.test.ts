import jStat from 'jstat'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { addReading, expectRefused, expectRelClose, newRevision, newTarget } from '../support/measure'

// Design math through the API: typed parameters on revisions (inherited from the parent), a
// model per target, predicted against measured, the calibration factor, the solver and the
// sample plan. The expected numbers are computed here from the published rules, not by the
// server's code:
// - rim speed v = rω (OpenStax University Physics Vol. 1, eq. 10.4), ω = n·2π/60 for n in rpm;
// - a tolerance ±a is rectangular: u = a/√3 (GUM JCGM 100:2008, 4.3.7);
// - a product's relative uncertainties add in quadrature (GUM 5.1.6, eq. 12), as does a quotient's;
// - a reading's u: uA = sd/√n, uB = δ/√12 (GUM 4.2.3, F.2.2.1), u = √(uA² + uB²);
// - the weighted mean of independent estimates: F = Σ(rᵢ/uᵢ²)/Σ(1/uᵢ²), u = (Σ1/uᵢ²)^−½;
// - Student's t quantiles from jstat (a reference library), ν by Welch–Satterthwaite (GUM G.4.1).
// Unit definitions: 1 mm = 0.001 m, 1 rpm = 2π/60 rad/s (SI Brochure, 9th ed.; rad = 1).

const R1_SPEED = [12.4, 12.6, 12.5, 12.7, 12.3]
const R2_SPEED = [13.8, 14.0, 13.9, 14.1, 13.7, 13.9]
const RESOLUTION = 0.1

function measured(xs: number[], resolution: number) {
  const n = xs.length
  const mean = xs.reduce((a, b) => a + b, 0) / n
  const sd = Math.sqrt(xs.reduce((a, x) => a + (x - mean) ** 2, 0) / (n - 1))
  const uA = sd / Math.sqrt(n)
  const uB = resolution / Math.sqrt(12)
  const u = Math.hypot(uA, uB)
  return { mean, sd, uA, uB, u, nu: u ** 4 / (uA ** 4 / (n - 1)) }
}

/** v = rω with its u from the tolerances of n (rpm) and r (mm), in m/s. */
function rim(rpm: number, rpmTol: number, mm: number, mmTol: number) {
  const omega = rpm * 2 * Math.PI / 60
  const r = mm / 1000
  const uOmega = (rpmTol / Math.sqrt(3)) * 2 * Math.PI / 60
  const uR = (mmTol / Math.sqrt(3)) / 1000
  const value = omega * r
  return { value, u: value * Math.hypot(uOmega / omega, uR / r), uOmega, uR, omega, r }
}

describe('design math beside the measurement', () => {
  let w: World
  let slug: string
  let buildId: string
  const v1 = (path = '') => `/api/v1/builds/${slug}${path}`

  beforeAll(async () => {
    w = await makeWorld()
    const c = w.engineer.client
    const b = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Flywheel launcher' })).body
    slug = b.slug
    buildId = b.id
    await newRevision(c, slug, 'R1', {
      parameters: [
        { key: 'motor_speed', name: 'Motor speed', value: 3000, unit: 'rpm', tolerance: 30 },
        { key: 'wheel_radius', name: 'Wheel radius', value: 50, unit: 'mm', tolerance: 0.5 },
        { key: 'ball_mass', value: 58, unit: 'g' },
        { key: 'drive_ratio', value: 2 },
        { key: 'carrier', name: 'Carrier', value: 'S235 steel' },
      ],
    })
    await newRevision(c, slug, 'R2', { parameters: [{ key: 'wheel_radius', name: 'Wheel radius', value: 55, unit: 'mm', tolerance: 0.5 }] })
    await newRevision(c, slug, 'R3')
    await newTarget(c, slug, { key: 'exit_speed', name: 'Exit speed', unit: 'm/s', comparator: 'atLeast', threshold: 18 })
    await newTarget(c, slug, { key: 'near_speed', name: 'Exit speed near its floor', unit: 'm/s', comparator: 'atLeast', threshold: 12.6 })
    await addReading(c, slug, { revision: 'R1', target: 'exit_speed', values: R1_SPEED, unit: 'm/s', resolution: RESOLUTION })
    await addReading(c, slug, { revision: 'R2', target: 'exit_speed', values: R2_SPEED, unit: 'm/s', resolution: RESOLUTION })
    await addReading(c, slug, { revision: 'R1', target: 'near_speed', values: R1_SPEED, unit: 'm/s', resolution: RESOLUTION })
    await addReading(c, slug, { revision: 'R2', target: 'near_speed', values: [12.9], unit: 'm/s' })
  })
  afterAll(closeTestDb)

  describe('typed parameters', () => {
    it('GET /revisions/:label gives the effective parameters, inherited from the parent', async () => {
      const r2 = await w.reviewer.client.get(v1('/revisions/R2'))
      expect(r2.status).toBe(200)
      expect(r2.body.parameters).toEqual([
        { key: 'motor_speed', name: 'Motor speed', value: 3000, unit: 'rpm', tolerance: 30, inherited: true },
        { key: 'wheel_radius', name: 'Wheel radius', value: 55, unit: 'mm', tolerance: 0.5, inherited: false },
        { key: 'ball_mass', name: 'ball_mass', value: 58, unit: 'g', tolerance: null, inherited: true },
        { key: 'drive_ratio', name: 'drive_ratio', value: 2, unit: null, tolerance: null, inherited: true },
        { key: 'carrier', name: 'Carrier', value: 'S235 steel', unit: null, tolerance: null, inherited: true },
      ])
      const r3 = await w.reviewer.client.get(v1('/revisions/R3'))
      expect(r3.body.parameters.every((p: { inherited: boolean }) => p.inherited)).toBe(true)
      expect(r3.body.parameters.find((p: { key: string }) => p.key === 'wheel_radius').value).toBe(55)
      // the list keeps each revision's own parameters
      const list = (await w.reviewer.client.get(v1('/revisions'))).body
      expect(list.find((r: { label: string }) => r.label === 'R3').parameters).toEqual([])
    })

    it('the older {name, value} shape is still accepted: the key of the ancestor’s parameter of that name, or one made from the name', async () => {
      const b = (await w.owner.client.post('/api/v1/builds', { team: w.team.slug, name: 'Older clients' })).body
      await newRevision(w.engineer.client, b.slug, 'A1', { parameters: [{ key: 'r_wheel', name: 'Wheel radius (front)', value: 50, unit: 'mm' }] })
      const a2 = await w.engineer.client.post(`/api/v1/builds/${b.slug}/revisions`, {
        label: 'A2', parameters: [{ name: 'Wheel radius (front)', value: 60, unit: 'mm' }, { name: 'Spring rate', value: '12.5', unit: 'N/mm' }, { name: 'Teeth', value: 36, unit: 'teeth' }],
      })
      expect(a2.status).toBe(201)
      expect(a2.body.parameters).toEqual([
        { key: 'r_wheel', name: 'Wheel radius (front)', value: 60, unit: 'mm', tolerance: null },
        // a text value stays a note-like parameter, as typed
        { key: 'spring_rate', name: 'Spring rate', value: '12.5', unit: 'N/mm', tolerance: null },
        { key: 'teeth', name: 'Teeth', value: 36, unit: 'teeth', tolerance: null },
      ])
      // an older-shape parameter whose key another parameter of the list gives explicitly gets its own
      const mixed = await w.engineer.client.post(`/api/v1/builds/${b.slug}/revisions`, { label: 'A9', parent: null, parameters: [{ name: 'Gear ratio', value: 1 }, { key: 'gear_ratio', value: 2 }] })
      expect(mixed.status).toBe(201)
      expect(mixed.body.parameters.map((p: { key: string }) => p.key)).toEqual(['gear_ratio_2', 'gear_ratio'])
      const a3 = await w.engineer.client.patch(`/api/v1/builds/${b.slug}/revisions/A2`, { parameters: [{ name: 'Wheel radius (front)', value: 62, unit: 'mm' }] })
      expect(a3.status).toBe(200)
      expect(a3.body.parameters).toEqual([{ key: 'r_wheel', name: 'Wheel radius (front)', value: 62, unit: 'mm', tolerance: null }])
    })

    it.each([
      ['a unit Ratchet can’t read', [{ key: 'grip', value: 3, unit: 'teeth' }], 'parameters.0.unit'],
      ['a key twice', [{ key: 'grip', value: 3 }, { key: 'grip', value: 4 }], 'parameters.1.key'],
      ['a key models read otherwise', [{ key: 'pi', value: 3 }], 'parameters.0.key'],
      ['a key that is no slug', [{ key: 'Wheel Radius', value: 3 }], 'parameters.0.key'],
      ['a tolerance on a text', [{ key: 'grip', value: 'soft', tolerance: 1 }], 'parameters.0.tolerance'],
      ['a negative tolerance', [{ key: 'grip', value: 3, tolerance: -1 }], 'parameters.0.tolerance'],
    ])('400 for %s, nothing saved', async (_case, parameters, field) => {
      const res = await expectRefused(buildId, 400, () => w.engineer.client.post(v1('/revisions'), { label: 'R9', parameters }))
      expect(Object.keys(res.body.data.fields)).toContain(field)
    })

    it('a frozen revision’s parameters are read-only (409), a Reviewer can’t edit them (403)', async () => {
      await newRevision(w.engineer.client, slug, 'RF', { parent: 'R2' })
      expect((await w.owner.client.post(v1('/revisions/RF/freeze'))).status).toBe(200)
      await expectRefused(buildId, 409, () => w.engineer.client.patch(v1('/revisions/RF'), { parameters: [{ key: 'wheel_radius', value: 60, unit: 'mm' }] }), /frozen/)
      await expectRefused(buildId, 403, () => w.reviewer.client.patch(v1('/revisions/R3'), { parameters: [{ key: 'wheel_radius', value: 60, unit: 'mm' }] }))
      await expectRefused(buildId, 403, () => w.reviewer.client.post(v1('/revisions'), { label: 'R9', parameters: [{ key: 'wheel_radius', value: 60, unit: 'mm' }] }))
    })
  })

  describe('a model per target', () => {
    it.each([
      ['a model of another dimension, naming both', 'motor_speed * wheel_radius^2', 422, /^model: The model gives .* but this target is measured in velocity \(m\/s\)$/],
      ['a key no revision defines', 'motor_speed * hub_radius', 422, /"hub_radius", which no revision of this build defines as a parameter/],
      ['a unit-less parameter in a dimensional model', 'motor_speed * drive_ratio', 422, /^model: The model gives .* but this target is measured in velocity \(m\/s\)$/],
      ['a text parameter', 'motor_speed * wheel_radius * carrier', 422, /can't use "carrier".*text/],
      ['a syntax error', 'motor_speed * (wheel_radius', 400, /^model: The model has a syntax error/],
      ['no key at all', '2 * 3', 400, /uses no parameter key/],
    ])('POST and PATCH refuse %s, nothing saved', async (_case, model, status, message) => {
      await expectRefused(buildId, status, () => w.engineer.client.post(v1('/targets'), { key: 'rim_speed', name: 'Rim speed', unit: 'm/s', comparator: 'atLeast', threshold: 10, model }), message)
      await expectRefused(buildId, status, () => w.engineer.client.patch(v1('/targets/exit_speed'), { model }), message)
    })

    it('PATCH sets the model (rpm × mm is a speed) and null removes it', async () => {
      const set = await w.engineer.client.patch(v1('/targets/near_speed'), { model: 'motor_speed * wheel_radius' })
      expect(set.status).toBe(200)
      expect(set.body.model).toBe('motor_speed * wheel_radius')
      const cleared = await w.engineer.client.patch(v1('/targets/near_speed'), { model: null })
      expect(cleared.body.model).toBeNull()
      const again = await w.engineer.client.patch(v1('/targets/exit_speed'), { model: 'motor_speed * wheel_radius' })
      expect(again.status).toBe(200)
      const reviewer = await w.reviewer.client.patch(v1('/targets/exit_speed'), { model: null })
      expect(reviewer.status).toBe(403)
    })
  })

  describe('predicted against measured', () => {
    beforeAll(async () => {
      const res = await w.engineer.client.patch(v1('/targets/exit_speed'), { model: 'motor_speed * wheel_radius' })
      expect(res.status).toBe(200)
    })

    it('the prediction, its u, the pooled mean and the ratio per revision, in the display unit', async () => {
      const res = await w.reviewer.client.get(v1('/targets/exit_speed/design'))
      expect(res.status).toBe(200)
      const d = res.body
      expect(d.model).toBe('motor_speed * wheel_radius')
      expect(d.target.key).toBe('exit_speed')
      expect(d.revisions.map((r: { revision: string }) => r.revision)).toEqual(['R1', 'R2', 'R3', 'RF'])
      const [r1, r2, r3] = d.revisions
      const p1 = rim(3000, 30, 50, 0.5)
      const p2 = rim(3000, 30, 55, 0.5)
      expectRelClose(r1.predicted.value, p1.value, 1e-10)
      expectRelClose(r1.predicted.u, p1.u, 1e-9)
      expectRelClose(r2.predicted.value, p2.value, 1e-10)
      const m1 = measured(R1_SPEED, RESOLUTION)
      const m2 = measured(R2_SPEED, RESOLUTION)
      expectRelClose(r1.measured.mean, m1.mean, 1e-10)
      expectRelClose(r1.measured.u, m1.u, 1e-9)
      const ratio1 = m1.mean / p1.value
      expectRelClose(r1.ratio.value, ratio1, 1e-10)
      expectRelClose(r1.ratio.u, ratio1 * Math.hypot(m1.u / m1.mean, p1.u / p1.value), 1e-8)
      // R3 inherits R2's parameters and has no readings
      expect(r3).toMatchObject({ measured: null, ratio: null, cantPredict: null })
      expectRelClose(r3.predicted.value, p2.value, 1e-10)

      const ratio2 = m2.mean / p2.value
      const u1 = ratio1 * Math.hypot(m1.u / m1.mean, p1.u / p1.value)
      const u2 = ratio2 * Math.hypot(m2.u / m2.mean, p2.u / p2.value)
      const sw = 1 / u1 ** 2 + 1 / u2 ** 2
      expect(d.calibration.revisions).toEqual(['R1', 'R2'])
      expect(d.calibration.method).toBe('weighted')
      // the factor's degrees of freedom come from the cells' (finite: each has a few samples)
      expect(d.calibration.nu).toBeGreaterThan(1)
      expect(Number.isFinite(d.calibration.nu)).toBe(true)
      expectRelClose(d.calibration.factor, (ratio1 / u1 ** 2 + ratio2 / u2 ** 2) / sw, 1e-8)
      expectRelClose(d.calibration.u, 1 / Math.sqrt(sw), 1e-8)
      // measured falls short of the model by a consistent factor
      expect(d.calibration.factor).toBeGreaterThan(0.78)
      expect(d.calibration.factor).toBeLessThan(0.82)

      // sensitivities on the latest revision with a prediction: v = ω·r has elasticity 1 in each
      expect(d.sensitivityRevision).toBe('RF')
      const byKey = Object.fromEntries(d.sensitivity.map((s: { parameter: string }) => [s.parameter, s]))
      expectRelClose(byKey.motor_speed.elasticity, 1, 1e-12)
      expectRelClose(byKey.wheel_radius.elasticity, 1, 1e-12)
      const sOmega = (p2.uOmega / p2.omega) ** 2
      const sR = (p2.uR / p2.r) ** 2
      expectRelClose(byKey.motor_speed.share, sOmega / (sOmega + sR), 1e-9)
      expectRelClose(byKey.wheel_radius.share, sR / (sOmega + sR), 1e-9)
    })

    it('a target without a model says so per revision', async () => {
      const d = (await w.reviewer.client.get(v1('/targets/near_speed/design'))).body
      expect(d).toMatchObject({ model: null, calibration: null, sensitivity: [], sensitivityRevision: null })
      expect(d.revisions[0]).toMatchObject({ revision: 'R1', predicted: null, ratio: null, cantPredict: 'The target has no model' })
      expect(d.revisions[0].measured.mean).toBeCloseTo(12.5, 12)
    })
  })

  describe('solve', () => {
    it('a linear model solves exactly: radius = r₀ × target / (F × predicted)', async () => {
      const d = (await w.reviewer.client.get(v1('/targets/exit_speed/design'))).body
      const res = await w.reviewer.client.post(v1('/targets/exit_speed/solve'), { parameter: 'wheel_radius' })
      expect(res.status).toBe(200)
      expect(res.body).toMatchObject({ parameter: 'wheel_radius', unit: 'mm', revision: 'RF', margin: 'none', goal: 18, calibrated: true })
      expectRelClose(res.body.factor, d.calibration.factor, 1e-12)
      const p = rim(3000, 30, 55, 0.5)
      expectRelClose(res.body.value, 55 * 18 / (res.body.factor * p.value), 1e-9)
      expectRelClose(res.body.predicted, 18, 1e-9)
    })

    it('with margin 95 the lower 95 % bound meets the threshold: a larger radius, k between z and t(0.975, 4)', async () => {
      const plain = (await w.reviewer.client.post(v1('/targets/exit_speed/solve'), { parameter: 'wheel_radius', revision: 'R2' })).body
      const res = await w.reviewer.client.post(v1('/targets/exit_speed/solve'), { parameter: 'wheel_radius', revision: 'R2', margin: '95' })
      expect(res.status).toBe(200)
      expect(res.body.value).toBeGreaterThan(plain.value)
      const k = (res.body.predicted - 18) / res.body.u
      expect(k).toBeGreaterThanOrEqual(1.959)
      expect(k).toBeLessThanOrEqual(jStat.studentt.inv(0.975, 4))
    })

    it('solves for the motor speed too, in rpm', async () => {
      const res = await w.reviewer.client.post(v1('/targets/exit_speed/solve'), { parameter: 'motor_speed', revision: 'R1' })
      expect(res.status).toBe(200)
      expect(res.body.unit).toBe('rpm')
      expectRelClose(res.body.value, 3000 * 18 / (res.body.factor * rim(3000, 30, 50, 0.5).value), 1e-9)
    })

    it.each([
      ['a parameter the model doesn’t use', { parameter: 'ball_mass' }, 422, /doesn't use "ball_mass"/],
      ['a text parameter', { parameter: 'carrier' }, 422, /text/],
      ['an unknown parameter', { parameter: 'hub_radius' }, 422, /no parameter "hub_radius"/],
      ['an unknown revision', { parameter: 'wheel_radius', revision: 'R99' }, 404, /R99/],
      ['a margin that isn’t one', { parameter: 'wheel_radius', margin: '99' }, 400, /margin/],
      ['no parameter', {}, 400, /parameter/],
    ])('refuses %s, nothing changed', async (_case, body, status, message) => {
      await expectRefused(buildId, status, () => w.reviewer.client.post(v1('/targets/exit_speed/solve'), body), message)
    })

    it('422 when no value within 1/1000× to 1000× reaches the threshold, and for a target without a model', async () => {
      await newTarget(w.engineer.client, slug, { key: 'tip_speed', name: 'Tip speed', unit: 'm/s', comparator: 'atLeast', threshold: 100000, model: 'motor_speed * wheel_radius' })
      await expectRefused(buildId, 422, () => w.reviewer.client.post(v1('/targets/tip_speed/solve'), { parameter: 'wheel_radius' }), /^No value of "wheel_radius" between 0\.055 and 55000 mm makes the calibrated prediction reach 100000 m\/s/)
      await expectRefused(buildId, 422, () => w.reviewer.client.post(v1('/targets/near_speed/solve'), { parameter: 'wheel_radius' }), /has no model/)
    })
  })

  it('without a calibration the model alone is solved (factor 1, calibrated false)', async () => {
    await newTarget(w.engineer.client, slug, { key: 'untested_speed', name: 'Untested speed', unit: 'km/h', comparator: 'atMost', threshold: 36, model: 'motor_speed * wheel_radius' })
    const res = await w.reviewer.client.post(v1('/targets/untested_speed/solve'), { parameter: 'motor_speed' })
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ factor: 1, calibrated: false, unit: 'rpm', goal: 36 })
    // 36 km/h = 10 m/s on a 55 mm radius: ω = 10/0.055 rad/s = 10/0.055·60/(2π) rpm
    expectRelClose(res.body.value, 10 / 0.055 * 60 / (2 * Math.PI), 1e-9)
  })

  describe('plan', () => {
    it('the smallest n ≥ 2 with t(0.975, ν(n))·√(sd²/n + u_B²) < |mean − threshold|', async () => {
      const res = await w.reviewer.client.get(v1('/targets/near_speed/plan?revision=R1'))
      expect(res.status).toBe(200)
      const m = measured(R1_SPEED, RESOLUTION)
      const distance = Math.abs(m.mean - 12.6)
      let want = 0
      for (let n = 2; n <= 10000; n++) {
        const uA = m.sd / Math.sqrt(n)
        const u = Math.hypot(uA, m.uB)
        const nu = u ** 4 / (uA ** 4 / (n - 1))
        if (jStat.studentt.inv(0.975, nu) * u < distance) {
          want = n
          break
        }
      }
      expect(want).toBeGreaterThan(2)
      expect(res.body).toMatchObject({ samplesNeeded: want, revision: 'R1' })
      expect(res.body.reason).toMatch(new RegExp(`^With ${want} samples`))
    })

    it('null with the reason when there is no scatter yet, or no reading', async () => {
      expect((await w.reviewer.client.get(v1('/targets/near_speed/plan?revision=R2'))).body).toMatchObject({ samplesNeeded: null, reason: expect.stringMatching(/^No scatter yet/) })
      expect((await w.reviewer.client.get(v1('/targets/near_speed/plan?revision=R3'))).body).toMatchObject({ samplesNeeded: null, reason: 'No reading of this target on R3 yet' })
      expect((await w.reviewer.client.get(v1('/targets/near_speed/plan?revision=R99'))).status).toBe(404)
      expect((await w.reviewer.client.get(v1('/targets/near_speed/plan'))).status).toBe(400)
    })
  })

  it('the stored parameters keep the entered value, unit and tolerance', async () => {
    const row = await testDb()('revisions').where({ build_id: buildId, label: 'R1' }).first()
    expect(row.parameters[0]).toEqual({ key: 'motor_speed', name: 'Motor speed', value: 3000, unit: 'rpm', tolerance: 30 })
  })
})
