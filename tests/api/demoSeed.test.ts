import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import knex, { type Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { knexConfig } from '../../knexfile'
import { seed as seedAccounts } from '../../seeds/01_demo-accounts'
import { seed as seedBuilds } from '../../seeds/02_demo-builds'
import { seed as seedFindings } from '../../seeds/03_demo-findings'
import { seed as seedFiles } from '../../seeds/04_demo-files'
import { seed as seedDigests } from '../../seeds/05_demo-digests'
import { ARCWHEEL_CLIP } from '../../scripts/lib/demoClips'
import { statedFrameRate } from '../../utils/motion'
import { solveTarget, targetDesign } from '../../server/utils/measure/design'
import { buildTargetDetail } from '../../server/utils/measure/scoreboard'
import { findTarget } from '../../server/utils/measure/targets'
import { ROOT, SCRATCH_DATABASE_URL } from '../support/env'

// The demo seed on the scratch database (emptied before and after): it runs twice without
// changing a row, and the flywheel launcher's story holds: its balls leave at about 0.8 of the
// wheels' rim speed on every revision, so the calibration factor is consistent and solving the
// wheel radius for the 20 m/s threshold gives a sensible wheel.
// 04_demo-files writes its files to a scratch directory of its own here (NUXT_FILES_DIR), not to
// the store the app under test uses.
//
// Hand-worked numbers: rim speed v = ωr (OpenStax University Physics Vol. 1, eq. 10.4) with
// 1 rpm = 2π/60 rad/s (NIST SP 811, B.8 via the revolution):
//   R1  3000 rpm × 50 mm = 15.7080 m/s, measured mean 12.60 → ratio 0.8021
//   R2  3600 rpm × 50 mm = 18.8496 m/s, measured mean 15.05 → ratio 0.7984
//   R3  3600 rpm × 60 mm = 22.6195 m/s, measured mean 18.10 → ratio 0.8002
// A linear model solves to r = 60 mm × 20 / (F · 22.6195) (docs/computation.md, Solve), ≈ 66.3 mm.

async function fingerprint(db: Knex): Promise<Record<string, string>> {
  const tables = (await db('information_schema.tables').where({ table_schema: 'public', table_type: 'BASE TABLE' })
    .whereNot('table_name', 'like', 'knex_%').pluck('table_name') as string[]).sort()
  const out: Record<string, string> = {}
  for (const t of tables) {
    const { rows } = await db.raw(`SELECT count(*)::text || ':' || coalesce(md5(string_agg(md5(to_jsonb(x)::text), '' ORDER BY md5(to_jsonb(x)::text))), '') AS f FROM ?? x`, [t]) as { rows: { f: string }[] }
    out[t] = rows[0]!.f
  }
  return out
}

describe('the demo seed', () => {
  let db: Knex
  // the track readings' migration won't roll back over tracks (it would lose them)
  const rollBack = async () => {
    if (await db.schema.hasColumn('readings', 'track')) await db('readings').whereNotNull('track').delete()
    await db.migrate.rollback(undefined, true)
  }
  const filesDir = mkdtempSync(join(tmpdir(), 'ratchet-seed-files-'))
  const runSeeds = async () => {
    await seedAccounts(db)
    await seedBuilds(db)
    await seedFindings(db)
    const env = { driver: process.env.NUXT_FILES_DRIVER, dir: process.env.NUXT_FILES_DIR }
    process.env.NUXT_FILES_DRIVER = 'fs'
    process.env.NUXT_FILES_DIR = filesDir
    try {
      await seedFiles(db)
    }
    finally {
      if (env.driver === undefined) delete process.env.NUXT_FILES_DRIVER
      else process.env.NUXT_FILES_DRIVER = env.driver
      if (env.dir === undefined) delete process.env.NUXT_FILES_DIR
      else process.env.NUXT_FILES_DIR = env.dir
    }
    await seedDigests(db)
  }

  beforeAll(async () => {
    const files = readdirSync(`${ROOT}migrations`).filter(f => f.endsWith('.ts')).sort()
    db = knex({
      ...knexConfig(SCRATCH_DATABASE_URL),
      migrations: {
        tableName: 'knex_migrations',
        migrationSource: {
          getMigrations: async () => files,
          getMigrationName: (f: string) => f,
          getMigration: (f: string) => import(`../../migrations/${f.replace(/\.ts$/, '')}.ts`),
        },
      },
    })
    await rollBack()
    await db.migrate.latest()
    await runSeeds()
  })
  afterAll(async () => {
    if (!db) return
    await rollBack()
    await db.migrate.latest()
    await db.destroy()
    rmSync(filesDir, { recursive: true, force: true })
  })

  it('changes nothing when it runs a second time', async () => {
    const before = await fingerprint(db)
    expect(Number(before.revisions!.split(':')[0])).toBeGreaterThan(0)
    await runSeeds()
    expect(await fingerprint(db)).toEqual(before)
  })

  it('gives the flywheel launcher a consistent calibration factor near 0.8 and a wheel radius that meets 20 m/s', async () => {
    const build = (await db('builds').where({ slug: 'arcwheel' }).first())!
    expect(build).toBeTruthy()
    const target = await findTarget(db, build.id, 'exit_speed')
    expect(target.model).toBe('motor_speed * wheel_radius')

    const design = await targetDesign(db, target)
    const byRev = Object.fromEntries(design.revisions.map(r => [r.revision, r]))
    expect(byRev.R1!.predicted!.value).toBeCloseTo(15.70796, 4)
    expect(byRev.R2!.predicted!.value).toBeCloseTo(18.84956, 4)
    expect(byRev.R3!.predicted!.value).toBeCloseTo(22.61947, 4)
    expect(byRev.R1!.measured!.mean).toBeCloseTo(12.6, 10)
    expect(byRev.R2!.measured!.mean).toBeCloseTo(15.05, 10)
    // R3 pools the Doppler samples (mean 18.10) with the clip's track reading (18.099 ± 0.023 m/s)
    expect(byRev.R3!.measured!.mean).toBeCloseTo(18.1, 2)
    const ratios = design.revisions.map(r => r.ratio!.value)
    expect(ratios).toHaveLength(3)
    // consistent: every revision within 0.5 % of the others
    expect((Math.max(...ratios) - Math.min(...ratios)) / Math.min(...ratios)).toBeLessThan(0.005)
    expect(design.calibration!.revisions).toEqual(['R1', 'R2', 'R3'])
    expect(design.calibration!.method).toBe('weighted')
    const F = design.calibration!.factor
    expect(F).toBeGreaterThan(Math.min(...ratios))
    expect(F).toBeLessThan(Math.max(...ratios))
    expect(F).toBeCloseTo(0.800, 2)

    const solved = await solveTarget(db, { target, body: { parameter: 'wheel_radius' } })
    expect(solved.revision).toBe('R3')
    expect(solved.unit).toBe('mm')
    expect(solved.calibrated).toBe(true)
    expect(solved.value).toBeCloseTo(60 * 20 / (F * 22.619467), 6)
    expect(solved.value).toBeGreaterThan(66)
    expect(solved.value).toBeLessThan(66.6)
    expect(solved.predicted).toBeCloseTo(20, 9)
    // with a 95 % margin the wheel must be a little larger still
    const safe = await solveTarget(db, { target, body: { parameter: 'wheel_radius', margin: '95' } })
    expect(safe.value).toBeGreaterThan(solved.value)
    expect(safe.value).toBeLessThan(solved.value * 1.02)
  })

  it('states the ball’s kinetic energy and the wheels’ rim speed on the exit speed, and the pack’s fuse on the current', async () => {
    const build = (await db('builds').where({ slug: 'arcwheel' }).first())!
    // the highest speed is the model's on R3, 22.6195 m/s: ½ · 0.058 kg · (22.6195 m/s)² = 14.838 J (OpenStax UP1 eq. 7.6)
    const exit = await buildTargetDetail(db, build, 'owner', 'exit_speed')
    expect(exit.cautions.map(c => c.unit)).toEqual(['J', 'm/s'])
    expect(exit.cautions[0]!.value).toBeCloseTo(0.5 * 0.058 * 22.619467 ** 2, 4)
    expect(exit.cautions[0]!.text).toContain('A 58 g projectile at 22.6 m/s carries 14.8 J')
    expect(exit.cautions[1]!.value).toBeCloseTo(22.619467, 5)
    // R3's peak current, mean of 33.1, 32.7, 33.4, 32.9 A = 33.025 A, against the 40 A pack fuse: 82.6 %
    const current = await buildTargetDetail(db, build, 'owner', 'peak_current')
    expect(current.cautions).toHaveLength(1)
    expect(current.cautions[0]!.text).toContain('up to 33 A, 82.6 % of the pack’s 40 A limit')
    // Trailhopper's current limit is the controller's, not the pack's: no number to state
    const trailhopper = (await db('builds').where({ slug: 'trailhopper' }).first())!
    expect((await buildTargetDetail(db, trailhopper, 'owner', 'peak_current')).cautions).toEqual([])
  })

  it('gives the flywheel launcher a 240 fps clip with the track reading measured on it', async () => {
    const build = (await db('builds').where({ slug: 'arcwheel' }).first())!
    const file = (await db('files').where({ build_id: build.id, name: ARCWHEEL_CLIP.file }).first())!
    expect(file.content_type).toBe('video/webm')
    const reading = (await db('readings').where({ id: file.reading_id! }).first())!
    expect(reading.track).toMatchObject({ timeUnit: 's', unit: 'mm', file: file.id })
    expect(reading.track!.points).toHaveLength(9)
    expect(reading.method).toBe('footage, 240 fps, 9 frames')
    expect(reading.stated_dof).toBe(7)
    // the clip was drawn with the ball at 18.1 m/s: the fitted speed holds it within its 95 % interval,
    // t(0.975, 7) = 2.365 (NIST/SEMATECH e-Handbook 1.3.6.7.2)
    const u = reading.stated_u_si!
    expect(Math.abs(reading.values_si[0]! - 18.1)).toBeLessThan(2.365 * u)
    expect(u).toBeGreaterThan(0.005)
    expect(u).toBeLessThan(0.05)
    // the file states its frame rate, as a camera's file would
    const bytes = readFileSync(join(ROOT, 'seeds/assets', ARCWHEEL_CLIP.file))
    const rate = await statedFrameRate(async (from, to) => new Uint8Array(bytes.subarray(from, to)), bytes.length)
    expect(rate.fps).toBe(240)
  })
})
