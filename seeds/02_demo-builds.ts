import { createHash, randomBytes } from 'node:crypto'
import type { Knex } from 'knex'
import type { Comparator } from '#shared/utils/conformance'
import { insertReading } from '../server/utils/measure/readings'
import { findRevision, freezeRevision, insertRevision } from '../server/utils/measure/revisions'
import { findTarget, insertTarget, updateTarget } from '../server/utils/measure/targets'

// Demo data only: invented targets, revisions and readings for the demo builds of
// 01_demo-accounts (Northwind Mobility Lab: Trailhopper, Perch, Arcwheel; Quarry Works: Gravel Sifter).
// Written through the same service functions as the API, so the cached statistics are the
// ones the server would compute. Idempotent: what exists is left as it is.
//
// The story of Trailhopper by R5: speed, torque and mass Met; peak current Marginal; the case
// temperature Slipped in R4 (sealed housing, smaller fins) and is still Short. R2's firmware
// cut-off moved the top speed into its band; R3's planetary stage moved the torque. The wheel
// power is derived (wheel torque × wheel speed, P = τω) and carries the propagated uncertainty.
// A target added here after a database was seeded gets its readings on the existing revisions.
//
// Arcwheel (a flywheel ball launcher) carries design parameters and a model: the exit speed is
// predicted as the wheel's rim speed, v = ωr (motor_speed * wheel_radius). The balls leave at
// about 0.8 of it on every revision (slip and the ball's squash), so the calibration factor is
// about 0.80 and solving the wheel radius for 20 m/s at R3's 3600 rpm gives about 66 mm.

interface DemoTarget {
  key: string
  name: string
  unit: string
  comparator: Comparator
  threshold: number
  thresholdHigh?: number
  stretch?: number
  noiseBand?: number
  notes?: string
  formula?: string
  /** a design model over the parameter keys, set once the revisions define them */
  model?: string
}

interface DemoReading {
  target: string
  values: number[]
  unit: string
  method: string
  resolution?: number
  by?: 'engineer' | 'engineer2' | 'rig'
}

interface DemoRevision {
  label: string
  builtOn: string
  summary: string
  changes: string[]
  parameters: { key?: string, name: string, value: number | string, unit?: string, tolerance?: number }[]
  readings: DemoReading[]
  signedOff?: boolean
}

interface DemoBuild {
  slug: string
  targets: DemoTarget[]
  revisions: DemoRevision[]
  rigToken?: string
}

const trailhopper: DemoBuild = {
  slug: 'trailhopper',
  rigToken: 'roller dyno',
  targets: [
    { key: 'top_speed', name: 'Assisted top speed', unit: 'km/h', comparator: 'between', threshold: 24, thresholdHigh: 25, noiseBand: 0.3, notes: 'Motor assistance must cut out between 24 and 25 km/h (flat road, 100 kg rider and load).' },
    { key: 'wheel_torque', name: 'Continuous wheel torque', unit: 'N·m', comparator: 'atLeast', threshold: 40, stretch: 45, noiseBand: 1, notes: 'Held for 60 s on the torque arm without the controller derating.' },
    { key: 'unit_mass', name: 'Drive-unit mass', unit: 'kg', comparator: 'atMost', threshold: 4.2, stretch: 3.9, noiseBand: 0.05, notes: 'Hub motor, carrier, gearing and fasteners; without the wheel.' },
    { key: 'peak_current', name: 'Peak battery current', unit: 'A', comparator: 'atMost', threshold: 30, noiseBand: 0.5, notes: 'Standing start on a 12 % ramp, clamp meter on the battery lead (peak hold).' },
    { key: 'case_temp', name: 'Motor case temperature after a 20-minute climb', unit: '°C', comparator: 'atMost', threshold: 80, noiseBand: 2, notes: '20 minutes at 8 % with 100 kg, ambient 20–24 °C, thermocouple on the case.' },
    { key: 'wheel_speed', name: 'Wheel speed at continuous torque', unit: 'rpm', comparator: 'atLeast', threshold: 50, noiseBand: 1, notes: 'Roller dyno holding the continuous-torque load; wheel encoder.' },
    { key: 'wheel_power', name: 'Mechanical power at the wheel', unit: 'W', comparator: 'atLeast', threshold: 250, stretch: 275, formula: 'wheel_torque * wheel_speed', notes: 'Derived: P = τω at the continuous-torque point (torque arm and wheel encoder on the same run).' },
  ],
  revisions: [
    {
      label: 'R1',
      builtOn: '2026-02-02',
      summary: 'First spin: stock hub motor on a steel carrier.',
      changes: ['Stock 250 W hub motor on an S235 steel carrier plate', 'Controller at its factory current limit (35 A)', 'Passive cooling only'],
      parameters: [{ name: 'Gear ratio', value: 1 }, { name: 'Controller current limit', value: 35, unit: 'A' }, { name: 'Battery voltage (nominal)', value: 36, unit: 'V' }, { name: 'Carrier material', value: 'S235 steel' }],
      signedOff: true,
      readings: [
        { target: 'top_speed', values: [26.1, 25.8, 26.4, 26.0, 25.9], unit: 'km/h', method: 'Roller dyno, wheel encoder', resolution: 0.1 },
        { target: 'wheel_torque', values: [34.2, 35.1, 33.8, 34.6, 35.0], unit: 'N·m', method: 'Torque arm and load cell', resolution: 0.1 },
        { target: 'unit_mass', values: [4.86, 4.87, 4.86], unit: 'kg', method: 'Platform scale', resolution: 0.01 },
        { target: 'peak_current', values: [35.2, 34.8, 35.5, 35.1, 34.9], unit: 'A', method: 'Clamp meter, peak hold', resolution: 0.1 },
        { target: 'case_temp', values: [71.5, 72.0, 70.8, 71.9], unit: '°C', method: 'Type K thermocouple on the case', resolution: 0.5, by: 'engineer2' },
        { target: 'wheel_speed', values: [60.2, 60.8, 59.9, 60.5, 60.4], unit: 'rpm', method: 'Roller dyno, wheel encoder', resolution: 0.1 },
      ],
    },
    {
      label: 'R2',
      builtOn: '2026-02-23',
      summary: 'Lighter carrier and the speed limit in firmware.',
      changes: ['Aluminium 6061-T6 carrier plate replaces the steel one', 'Assistance cut-off set to 24.5 km/h in the controller firmware', 'Torque sensor recalibrated'],
      parameters: [{ name: 'Gear ratio', value: 1 }, { name: 'Controller current limit', value: 35, unit: 'A' }, { name: 'Speed cut-off', value: 24.5, unit: 'km/h' }, { name: 'Carrier material', value: '6061-T6 aluminium' }],
      signedOff: true,
      readings: [
        { target: 'top_speed', values: [15.2, 15.3, 15.2, 15.1, 15.3, 15.2], unit: 'mph', method: 'GPS logger on a flat test track', resolution: 0.1 },
        { target: 'wheel_torque', values: [35.0, 34.4, 35.6, 34.9], unit: 'N·m', method: 'Torque arm and load cell', resolution: 0.1 },
        { target: 'unit_mass', values: [9.59, 9.60, 9.58], unit: 'lb', method: 'Hanging scale', resolution: 0.01 },
        { target: 'peak_current', values: [35.0, 35.3, 34.7, 35.2], unit: 'A', method: 'Clamp meter, peak hold', resolution: 0.1 },
        { target: 'case_temp', values: [163.4, 162.5, 164.1, 163.0], unit: '°F', method: 'IR thermometer, case centre', resolution: 0.5, by: 'engineer2' },
        { target: 'wheel_speed', values: [60.6, 61.0, 60.3, 60.9], unit: 'rpm', method: 'Roller dyno, wheel encoder', resolution: 0.1 },
      ],
    },
    {
      label: 'R3',
      builtOn: '2026-03-16',
      summary: 'Planetary stage for hill torque; lower current limit.',
      changes: ['1:1.4 planetary stage added for hill torque', 'Controller current limit lowered to 30 A', 'Shorter phase leads'],
      parameters: [{ name: 'Gear ratio', value: 1.4 }, { name: 'Controller current limit', value: 30, unit: 'A' }, { name: 'Speed cut-off', value: 24.5, unit: 'km/h' }],
      signedOff: true,
      readings: [
        { target: 'top_speed', values: [24.4, 24.6, 24.5, 24.3, 24.6], unit: 'km/h', method: 'Roller dyno, wheel encoder', resolution: 0.1 },
        { target: 'wheel_torque', values: [31.8, 32.1, 31.5, 31.9, 32.3, 31.7, 32.0], unit: 'lbf·ft', method: 'Torque wrench on the axle (imperial scale)', resolution: 0.1 },
        { target: 'unit_mass', values: [4.37, 4.38, 4.37], unit: 'kg', method: 'Platform scale', resolution: 0.01 },
        { target: 'peak_current', values: [30.4, 29.6, 30.9, 29.8, 30.2, 30.5], unit: 'A', method: 'Clamp meter, peak hold', resolution: 0.1 },
        { target: 'case_temp', values: [74.2, 73.5, 74.8, 74.0, 73.9], unit: '°C', method: 'Type K thermocouple on the case', resolution: 0.5, by: 'engineer2' },
        { target: 'wheel_speed', values: [52.1, 52.6, 51.8, 52.4, 52.0], unit: 'rpm', method: 'Roller dyno, wheel encoder', resolution: 0.1 },
      ],
    },
    {
      label: 'R4',
      builtOn: '2026-04-06',
      summary: 'Sealed housing and climb boost. The case now runs hot.',
      changes: ['Sealed housing (IP65) with a new gasket', 'Smaller, lighter heat-sink fins', 'Firmware: boost mode on climbs'],
      parameters: [{ name: 'Gear ratio', value: 1.4 }, { name: 'Controller current limit', value: 30, unit: 'A' }, { name: 'Fin area', value: 310, unit: 'cm²' }, { name: 'Housing rating', value: 'IP65' }],
      readings: [
        { target: 'top_speed', values: [15.2, 15.3, 15.2, 15.3], unit: 'mph', method: 'Roller dyno, posted by the rig', resolution: 0.1, by: 'rig' },
        { target: 'wheel_torque', values: [43.6, 42.9, 43.8, 43.1, 43.4], unit: 'N·m', method: 'Torque arm and load cell', resolution: 0.1 },
        { target: 'unit_mass', values: [9.10, 9.11, 9.09], unit: 'lb', method: 'Hanging scale', resolution: 0.02 },
        { target: 'peak_current', values: [30.6, 29.9, 30.8, 30.1, 30.5], unit: 'A', method: 'Clamp meter, peak hold', resolution: 0.1 },
        { target: 'case_temp', values: [182.3, 183.6, 181.9, 183.0, 182.7], unit: '°F', method: 'IR thermometer, case centre', resolution: 0.5, by: 'engineer2' },
        { target: 'wheel_speed', values: [5.59, 5.65, 5.56, 5.61, 5.60], unit: 'rad/s', method: 'Roller dyno, posted by the rig', resolution: 0.01, by: 'rig' },
      ],
    },
    {
      label: 'R5',
      builtOn: '2026-04-27',
      summary: 'Weight pass and a softer current ramp.',
      changes: ['Hollow axle', 'Current limit 29 A with a soft ramp', 'Titanium fasteners'],
      parameters: [{ name: 'Gear ratio', value: 1.4 }, { name: 'Controller current limit', value: 29, unit: 'A' }, { name: 'Current ramp', value: 150, unit: 'ms' }],
      readings: [
        { target: 'top_speed', values: [24.5, 24.6, 24.4, 24.5, 24.6, 24.5], unit: 'km/h', method: 'Roller dyno, posted by the rig', resolution: 0.1, by: 'rig' },
        { target: 'wheel_torque', values: [32.4, 32.0, 32.6, 32.2, 32.5], unit: 'lbf·ft', method: 'Torque wrench on the axle (imperial scale)', resolution: 0.1 },
        { target: 'unit_mass', values: [3.98, 3.99, 3.98, 3.99], unit: 'kg', method: 'Platform scale', resolution: 0.01 },
        { target: 'peak_current', values: [29.2, 30.1, 29.6, 30.3, 29.5, 29.9], unit: 'A', method: 'Clamp meter, peak hold', resolution: 0.1 },
        { target: 'case_temp', values: [82.9, 83.6, 82.4, 83.1], unit: '°C', method: 'Type K thermocouple on the case', resolution: 0.5, by: 'engineer2' },
        { target: 'wheel_speed', values: [55.6, 56.1, 55.8, 55.9, 55.7], unit: 'rpm', method: 'Roller dyno, posted by the rig', resolution: 0.1, by: 'rig' },
      ],
    },
  ],
}

const perch: DemoBuild = {
  slug: 'perch',
  targets: [
    { key: 'slew_rate', name: 'Pan slew rate', unit: 'deg/s', comparator: 'atLeast', threshold: 60, stretch: 75, noiseBand: 2, notes: 'Full 90° pan, timed from the encoder.' },
    { key: 'holding_torque', name: 'Tilt holding torque', unit: 'N·m', comparator: 'atLeast', threshold: 2, noiseBand: 0.05, notes: 'Unpowered, until the tilt axis slips.' },
    { key: 'standby_current', name: 'Standby current', unit: 'mA', comparator: 'atMost', threshold: 80, stretch: 60, noiseBand: 2, notes: 'At 12 V, camera asleep, radio listening.' },
    { key: 'head_mass', name: 'Head mass', unit: 'g', comparator: 'atMost', threshold: 900, noiseBand: 5, notes: 'Without the camera and the tripod plate.' },
  ],
  revisions: [
    {
      label: 'R1',
      builtOn: '2026-03-02',
      summary: 'Printed prototype with hobby servos.',
      changes: ['PETG printed frame', 'Two hobby servos, direct drive'],
      parameters: [{ name: 'Pan reduction', value: 1 }, { name: 'Supply voltage', value: 12, unit: 'V' }],
      readings: [
        { target: 'slew_rate', values: [52.1, 53.4, 51.8, 52.7], unit: 'deg/s', method: 'Encoder log, 90° pan', resolution: 0.1 },
        { target: 'holding_torque', values: [18.5, 19.0, 18.7], unit: 'kgf·cm', method: 'Spring scale on a 10 cm arm', resolution: 0.1 },
        { target: 'standby_current', values: [95, 97, 94, 96], unit: 'mA', method: 'Bench supply readout', resolution: 1 },
        { target: 'head_mass', values: [948, 951], unit: 'g', method: 'Kitchen scale', resolution: 1 },
      ],
    },
    {
      label: 'R2',
      builtOn: '2026-03-30',
      summary: 'Steppers with belt reduction.',
      changes: ['NEMA 17 steppers with 3:1 belt reduction', 'Driver sleeps between moves'],
      parameters: [{ name: 'Pan reduction', value: 3 }, { name: 'Supply voltage', value: 12, unit: 'V' }],
      readings: [
        { target: 'slew_rate', values: [61.5, 62.3, 60.9, 61.8, 62.0], unit: 'deg/s', method: 'Encoder log, 90° pan', resolution: 0.1 },
        { target: 'holding_torque', values: [212, 208, 215, 210], unit: 'N·cm', method: 'Torque gauge', resolution: 1 },
        { target: 'standby_current', values: [78, 81, 79, 80, 82], unit: 'mA', method: 'Bench supply readout', resolution: 1 },
        { target: 'head_mass', values: [32.4, 32.5, 32.3], unit: 'oz', method: 'Postal scale', resolution: 0.1 },
      ],
    },
    {
      label: 'R3',
      builtOn: '2026-04-20',
      summary: 'Machined frame and a low-power radio.',
      changes: ['Machined aluminium frame', 'Radio module with a 1 % duty listen cycle'],
      parameters: [{ name: 'Pan reduction', value: 3 }, { name: 'Frame material', value: '6082 aluminium' }],
      readings: [
        { target: 'slew_rate', values: [64.2, 63.8, 64.9, 64.5], unit: 'deg/s', method: 'Encoder log, 90° pan', resolution: 0.1 },
        { target: 'holding_torque', values: [2.15, 2.18, 2.12], unit: 'N·m', method: 'Torque gauge', resolution: 0.01 },
        { target: 'standby_current', values: [71, 72, 70, 73], unit: 'mA', method: 'Bench supply readout', resolution: 1 },
        { target: 'head_mass', values: [884, 886, 885], unit: 'g', method: 'Kitchen scale', resolution: 1 },
      ],
    },
  ],
}

const arcwheel: DemoBuild = {
  slug: 'arcwheel',
  targets: [
    { key: 'exit_speed', name: 'Ball exit speed', unit: 'm/s', comparator: 'atLeast', threshold: 20, stretch: 22, noiseBand: 0.3, model: 'motor_speed * wheel_radius', notes: 'Doppler speed sensor 1 m past the wheels, one reading per ball; the rig fires into a catch net.' },
    { key: 'wheel_speed', name: 'Wheel speed while feeding', unit: 'rpm', comparator: 'atLeast', threshold: 3400, noiseBand: 20, notes: 'Optical tachometer on the lower wheel, a ball every 3 s.' },
    { key: 'peak_current', name: 'Peak pack current at spin-up', unit: 'A', comparator: 'atMost', threshold: 35, noiseBand: 0.5, notes: 'Both motors spinning up from rest; clamp meter on the pack lead (peak hold).' },
  ],
  revisions: [
    {
      label: 'R1',
      builtOn: '2026-03-23',
      summary: 'Two printed wheels on hobby motors.',
      changes: ['Two 100 mm printed wheels, counter-rotating', 'Motors at 3000 rpm set-point', 'Gravity ball feed'],
      parameters: [
        { key: 'motor_speed', name: 'Motor speed set-point', value: 3000, unit: 'rpm' },
        { key: 'wheel_radius', name: 'Wheel radius', value: 50, unit: 'mm', tolerance: 0.2 },
        { key: 'ball_mass', name: 'Ball mass', value: 58, unit: 'g', tolerance: 1 },
        { key: 'pack_fuse', name: 'Pack fuse rating', value: 40, unit: 'A' },
        { key: 'wheel_material', name: 'Wheel material', value: 'PETG, TPU tread' },
      ],
      readings: [
        { target: 'exit_speed', values: [12.4, 12.8, 12.5, 12.7, 12.3, 12.9, 12.6, 12.5, 12.7], unit: 'm/s', method: 'Doppler speed sensor, one ball per sample', resolution: 0.1 },
        { target: 'wheel_speed', values: [2950, 2940, 2965, 2935, 2955], unit: 'rpm', method: 'Optical tachometer', resolution: 5 },
        { target: 'peak_current', values: [27.8, 28.3, 27.5, 28.1], unit: 'A', method: 'Clamp meter, peak hold', resolution: 0.1, by: 'engineer2' },
      ],
    },
    {
      label: 'R2',
      builtOn: '2026-04-13',
      summary: 'Stronger motors at 3600 rpm.',
      changes: ['Motors with a higher Kv, set-point 3600 rpm', 'Aluminium motor mounts'],
      parameters: [{ key: 'motor_speed', name: 'Motor speed set-point', value: 3600, unit: 'rpm' }],
      readings: [
        { target: 'exit_speed', values: [15.1, 14.8, 15.3, 15.0, 14.9, 15.2, 15.0, 14.7, 15.3, 15.2], unit: 'm/s', method: 'Doppler speed sensor, one ball per sample', resolution: 0.1 },
        { target: 'wheel_speed', values: [3560, 3545, 3570, 3550, 3555], unit: 'rpm', method: 'Optical tachometer', resolution: 5 },
        { target: 'peak_current', values: [36.2, 35.8, 36.5, 36.0], unit: 'A', method: 'Clamp meter, peak hold', resolution: 0.1, by: 'engineer2' },
      ],
    },
    {
      label: 'R3',
      builtOn: '2026-05-04',
      summary: 'Larger wheels and a soft start.',
      changes: ['120 mm machined wheels with a rubber tread', 'Soft start ramps the motors over 1.5 s'],
      parameters: [
        { key: 'wheel_radius', name: 'Wheel radius', value: 60, unit: 'mm', tolerance: 0.2 },
        { key: 'wheel_material', name: 'Wheel material', value: '6061 aluminium, rubber tread' },
      ],
      readings: [
        { target: 'exit_speed', values: [18.0, 18.3, 17.9, 18.2, 18.1, 17.8, 18.4, 18.1], unit: 'm/s', method: 'Doppler speed sensor, one ball per sample', resolution: 0.1 },
        { target: 'wheel_speed', values: [3540, 3530, 3555, 3535, 3545], unit: 'rpm', method: 'Optical tachometer', resolution: 5 },
        { target: 'peak_current', values: [33.1, 32.7, 33.4, 32.9], unit: 'A', method: 'Clamp meter, peak hold', resolution: 0.1, by: 'engineer2' },
      ],
    },
  ],
}

const gravelSifter: DemoBuild = {
  slug: 'gravel-sifter',
  targets: [
    { key: 'deck_frequency', name: 'Deck vibration frequency', unit: 'Hz', comparator: 'between', threshold: 15, thresholdHigh: 17, noiseBand: 0.2 },
  ],
  revisions: [
    {
      label: 'R1',
      builtOn: '2026-03-09',
      summary: 'Eccentric-mass exciter on a spring-mounted deck.',
      changes: ['Twin eccentric masses at 960 rpm', 'Rubber spring mounts'],
      parameters: [{ name: 'Exciter speed', value: 960, unit: 'rpm' }],
      readings: [
        { target: 'deck_frequency', values: [16.1, 16.0, 16.2, 15.9, 16.1], unit: 'Hz', method: 'Accelerometer, FFT peak', resolution: 0.05 },
      ],
    },
  ],
}

async function userId(trx: Knex.Transaction, email: string): Promise<string | null> {
  return (await trx('users').where({ email }).first('id'))?.id ?? null
}

/** A rig token whose secret nobody holds: it only shows which readings a rig posted. */
async function demoRigToken(trx: Knex.Transaction, buildId: string, name: string, createdBy: string | null): Promise<string> {
  const found = await trx('rig_tokens').where({ build_id: buildId, name }).first('id')
  if (found) return found.id
  const secret = `rig_${randomBytes(32).toString('base64url')}`
  const [row] = await trx('rig_tokens').insert({
    build_id: buildId,
    name,
    prefix: secret.slice(0, 10),
    token_hash: createHash('sha256').update(secret).digest('hex'),
    created_by: createdBy,
  }).returning('id')
  return row!.id
}

async function seedBuild(trx: Knex.Transaction, demo: DemoBuild, people: Record<string, string | null>) {
  const build = await trx('builds').where({ slug: demo.slug }).first('id')
  if (!build) return
  const owner = people.owner ?? null
  const added = new Set<string>()
  for (const t of demo.targets) {
    if (!(await trx('targets').where({ build_id: build.id, key: t.key }).first('id'))) {
      await insertTarget(trx, { userId: owner }, { buildId: build.id, body: { ...t, notes: t.notes ?? '', formula: t.formula ?? null, model: null } })
      added.add(t.key)
    }
  }
  const rigTokenId = demo.rigToken ? await demoRigToken(trx, build.id, demo.rigToken, owner) : null
  const record = async (r: DemoRevision, readings: DemoReading[]) => {
    for (const reading of readings) {
      const by = reading.by ?? 'engineer'
      const actor = by === 'rig' ? { userId: null, rigTokenId } : { userId: people[by] ?? null, rigTokenId: null }
      await insertReading(trx, actor, { buildId: build.id, body: {
        revision: r.label,
        target: reading.target,
        values: reading.values,
        unit: reading.unit,
        method: reading.method,
        resolution: reading.resolution,
        takenAt: `${r.builtOn}T${String(9 + r.readings.indexOf(reading)).padStart(2, '0')}:30:00Z`,
      } })
    }
  }
  for (const r of demo.revisions) {
    const existing = await trx('revisions').where({ build_id: build.id, label: r.label })
      .first('id', trx.raw('frozen_at::text AS frozen_at'), 'frozen_by') as { id: string, frozen_at: string | null, frozen_by: string | null } | undefined
    if (existing) {
      // a demo target added since this database was seeded: its readings on the existing revision,
      // which keeps its sign-off (reopened and signed again inside this transaction, no event)
      const missing = r.readings.filter(x => added.has(x.target))
      if (missing.length === 0) continue
      if (existing.frozen_at) await trx('revisions').where({ id: existing.id }).update({ frozen_at: null })
      await record(r, missing)
      if (existing.frozen_at) await trx('revisions').where({ id: existing.id }).update({ frozen_at: trx.raw('?::timestamptz', [existing.frozen_at]), frozen_by: existing.frozen_by })
      continue
    }
    await insertRevision(trx, build.id, { label: r.label, summary: r.summary, changes: r.changes, parameters: r.parameters, builtOn: r.builtOn }, owner)
    await record(r, r.readings)
    if (r.signedOff) await freezeRevision(trx, await findRevision(trx, build.id, r.label), people.reviewer ?? null)
  }
  // a model names parameter keys, which must exist first: set on the targets added in this run
  for (const t of demo.targets) {
    if (!t.model || !added.has(t.key)) continue
    await updateTarget(trx, { target: await findTarget(trx, build.id, t.key), patch: { model: t.model } })
  }
}

export async function seed(knex: Knex): Promise<void> {
  await knex.transaction(async (trx) => {
    const people = {
      owner: await userId(trx, 'owner@demo.test'),
      engineer: await userId(trx, 'engineer@demo.test'),
      engineer2: await userId(trx, 'engineer2@demo.test'),
      reviewer: await userId(trx, 'reviewer@demo.test'),
    }
    for (const demo of [trailhopper, perch, arcwheel, gravelSifter]) await seedBuild(trx, demo, people)
  })
}
