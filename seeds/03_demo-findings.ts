import type { Knex } from 'knex'
import type { FixState, Lane, Severity } from '#shared/utils/lanes'
import type { Role } from '#shared/utils/roles'
import type { Actor } from '../server/utils/audit'
import { addComment } from '../server/utils/findings/detail'
import { createFinding, lockFinding } from '../server/utils/findings/edit'
import { addFix } from '../server/utils/findings/fixes'
import { moveFinding } from '../server/utils/findings/move'

// Demo data only: invented findings on Trailhopper's board (02_demo-builds made its targets,
// revisions and readings). Written through the same services as the API, so the lane rules hold:
// the Closed ones are verified by their readings, the Retest one has a fix that landed in R5 and
// waits for a reading that shows peak current Met (R5's is Marginal). Idempotent: a build that
// has findings already is left as it is.

type Person = 'owner' | 'engineer' | 'engineer2' | 'reviewer'

interface DemoFix {
  description: string
  owner: Person
  dueOn?: string
  state: FixState
  landedIn?: string
}

interface DemoFinding {
  title: string
  severity: Severity
  seenOn: string
  targets: string[]
  description: string
  lane: Lane
  by: Person
  fixes?: DemoFix[]
  comments?: { by: Person, body: string }[]
}

const trailhopper: DemoFinding[] = [
  {
    title: 'Battery connector heats after the 20-minute climb',
    severity: 'safety',
    seenOn: 'R5',
    targets: ['peak_current'],
    lane: 'spotted',
    by: 'engineer2',
    description: 'After the climb test the **battery-side connector** was too hot to hold. IR thermometer: 68 °C on the housing, 24 °C ambient.\n\n- Stop climb tests above 25 A until it is traced\n- Check crimp quality and the contact rating of the connector',
    fixes: [{ description: 'Measure contact resistance of both halves; replace with a connector rated for 40 A continuous', owner: 'engineer', dueOn: '2026-05-08', state: 'planned' }],
    comments: [{ by: 'owner', body: '@Chiara can you log the connector temperature with a thermocouple on the next climb? Keep the fire blanket next to the rig.' }],
  },
  {
    title: 'Kickstand bracket rattles on cobbles',
    severity: 'cosmetic',
    seenOn: 'R5',
    targets: [],
    lane: 'spotted',
    by: 'engineer',
    description: 'Audible rattle from the kickstand bracket on the cobbled test loop. No play measured at the bolts.',
  },
  {
    title: 'Torque sensor reads high once the case is warm',
    severity: 'degrades',
    seenOn: 'R4',
    targets: ['wheel_torque'],
    lane: 'traced',
    by: 'engineer',
    description: 'Torque arm and sensor disagree by about 3 % after the climb.\n\n**Cause:** the sensor’s strain gauge sits on the motor case and has no temperature compensation; the case runs hotter since R4.',
  },
  {
    title: 'Case temperature slipped in R4: sealed housing, smaller fins',
    severity: 'blocks-target',
    seenOn: 'R4',
    targets: ['case_temp'],
    lane: 'bench',
    by: 'engineer2',
    description: 'R4 sealed the housing (IP65) and cut the fin area to 310 cm². The case now ends the climb above 80 °C (R3: 74 °C).\n\nR5 did not change the cooling and is still Short.',
    fixes: [{ description: 'Restore the fin area to 420 cm² and add a thermal pad between stator carrier and housing', owner: 'engineer2', dueOn: '2026-05-18', state: 'in-progress' }],
    comments: [{ by: 'reviewer', body: 'Please keep the IP rating: a vent would fail the rain test. A thermal model before machining new fins would help.' }],
  },
  {
    title: 'Peak current overshoots 30 A on a standing start',
    severity: 'blocks-target',
    seenOn: 'R3',
    targets: ['peak_current'],
    lane: 'retest',
    by: 'engineer',
    description: 'Standing start on the 12 % ramp: the clamp meter holds 30.9 A peaks. The controller’s current limit is 30 A but the loop overshoots.',
    fixes: [{ description: 'Soft current ramp (150 ms) and a 29 A limit in the controller', owner: 'engineer', dueOn: '2026-04-24', state: 'landed', landedIn: 'R5' }],
    comments: [{ by: 'engineer', body: 'Landed in R5. R5’s reading is Marginal: the interval still touches 30 A. Taking more samples on the ramp before closing.' }],
  },
  {
    title: 'Assistance cuts out at 26 km/h, above the legal band',
    severity: 'blocks-target',
    seenOn: 'R1',
    targets: ['top_speed'],
    lane: 'closed',
    by: 'engineer',
    description: 'R1 ran at 26 km/h on the dyno: the stock controller has no cut-off set.',
    fixes: [{ description: 'Assistance cut-off at 24.5 km/h in the controller firmware', owner: 'engineer', state: 'landed', landedIn: 'R2' }],
  },
  {
    title: 'Drive unit over the mass target with the steel carrier',
    severity: 'blocks-target',
    seenOn: 'R1',
    targets: ['unit_mass'],
    lane: 'closed',
    by: 'engineer2',
    description: '4.86 kg on the platform scale against ≤ 4.2 kg.',
    fixes: [
      { description: 'Aluminium 6061-T6 carrier plate', owner: 'engineer2', state: 'landed', landedIn: 'R2' },
      { description: 'Hollow axle and titanium fasteners', owner: 'engineer2', state: 'landed', landedIn: 'R5' },
    ],
  },
  {
    title: 'Hub motor hums at 18 km/h',
    severity: 'cosmetic',
    seenOn: 'R3',
    targets: [],
    lane: 'parked',
    by: 'engineer',
    description: 'A narrow-band hum around 18 km/h, likely a housing resonance. Parked until the housing is redesigned.',
  },
]

const NAMES: Record<Person, string> = { owner: 'owner@demo.test', engineer: 'engineer@demo.test', engineer2: 'engineer2@demo.test', reviewer: 'reviewer@demo.test' }
const ROLES: Record<Person, Role> = { owner: 'owner', engineer: 'engineer', engineer2: 'engineer', reviewer: 'reviewer' }

export async function seed(knex: Knex): Promise<void> {
  await knex.transaction(async (trx) => {
    const build = await trx('builds').where({ slug: 'trailhopper' }).first('id', 'team_id')
    if (!build) return
    if (await trx('findings').where({ build_id: build.id }).first('id')) return
    const people = {} as Record<Person, { id: string, name: string }>
    for (const [key, email] of Object.entries(NAMES) as [Person, string][]) {
      const row = await trx('users').where({ email }).first('id', 'name')
      if (!row) return
      people[key] = row
    }
    const actor = (p: Person): Actor => ({ userId: people[p].id, rigTokenId: null, name: people[p].name, label: NAMES[p], role: ROLES[p], origin: { ip: 'seed', userAgent: '' } })

    for (const d of trailhopper) {
      const created = await createFinding(trx, actor(d.by), { buildId: build.id, body: { title: d.title, description: d.description, severity: d.severity, seenOn: d.seenOn, targets: d.targets } })
      for (const fix of d.fixes ?? []) {
        await addFix(trx, actor(d.by), { finding: await lockFinding(trx, created.id), body: { description: fix.description, ownerId: people[fix.owner].id, dueOn: fix.dueOn ?? null, state: fix.state, landedIn: fix.landedIn ?? null } })
      }
      // along the board one lane at a time, as the team would have moved it
      const path: Lane[] = d.lane === 'parked' ? ['parked'] : (['traced', 'bench', 'retest', 'closed'] as Lane[]).slice(0, ['spotted', 'traced', 'bench', 'retest', 'closed'].indexOf(d.lane))
      for (const lane of path) {
        const f = await lockFinding(trx, created.id)
        await moveFinding(trx, actor(d.by), { finding: f, teamId: build.team_id, body: { lane, version: f.version } })
      }
      for (const c of d.comments ?? []) {
        await addComment(trx, actor(c.by), { finding: await lockFinding(trx, created.id), teamId: build.team_id, body: { body: c.body } })
      }
    }
  })
}
