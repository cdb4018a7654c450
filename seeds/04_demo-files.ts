import { readFileSync } from 'node:fs'
import { deflateSync } from 'node:zlib'
import type { Knex } from 'knex'
import { storeBytes } from '../server/utils/files/uploads'
import { createFileStore, filesConfigFromEnv, type FileStore } from '../server/utils/files/storage'
import { insertReading } from '../server/utils/measure/readings'
import { ARCWHEEL_CLIP, arcwheelTrack } from '../scripts/lib/demoClips'

// Demo data only: evidence files on Trailhopper (02_demo-builds made its readings, 03 its
// findings) and Arcwheel's measured clip. The photos are drawn here, the CSV is the instrument
// log behind R5's case temperature reading, and the footage is the invented clips in seeds/assets
// (made by scripts/make-demo-footage.ts). Arcwheel's clip carries the track reading that was
// measured on it (scripts/lib/demoClips.ts has the marks). Stored through the same file store as
// uploads, under the NUXT_FILES_* settings. Idempotent: a file whose name the build already has is
// skipped, and so is a track reading the clip already has.

// ---- a small PNG encoder (8-bit RGB, no filtering) ----

const CRC_TABLE = Array.from({ length: 256 }, (_, n) => {
  let c = n
  for (let k = 0; k < 8; k++) c = c & 1 ? 0xEDB88320 ^ (c >>> 1) : c >>> 1
  return c >>> 0
})

function crc32(buf: Buffer): number {
  let c = 0xFFFFFFFF
  for (const b of buf) c = CRC_TABLE[(c ^ b) & 0xFF]! ^ (c >>> 8)
  return (c ^ 0xFFFFFFFF) >>> 0
}

function chunk(type: string, data: Buffer): Buffer {
  const head = Buffer.alloc(8)
  head.writeUInt32BE(data.length, 0)
  head.write(type, 4, 'ascii')
  const crc = Buffer.alloc(4)
  crc.writeUInt32BE(crc32(Buffer.concat([head.subarray(4), data])))
  return Buffer.concat([head, data, crc])
}

type Rgb = [number, number, number]

function png(width: number, height: number, pixel: (x: number, y: number) => Rgb): Buffer {
  const raw = Buffer.alloc((width * 3 + 1) * height)
  for (let y = 0; y < height; y++) {
    const row = y * (width * 3 + 1)
    raw[row] = 0
    for (let x = 0; x < width; x++) {
      const [r, g, b] = pixel(x, y)
      raw[row + 1 + x * 3] = r
      raw[row + 2 + x * 3] = g
      raw[row + 3 + x * 3] = b
    }
  }
  const ihdr = Buffer.alloc(13)
  ihdr.writeUInt32BE(width, 0)
  ihdr.writeUInt32BE(height, 4)
  ihdr.set([8, 2, 0, 0, 0], 8)
  return Buffer.concat([Buffer.from([0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A]), chunk('IHDR', ihdr), chunk('IDAT', deflateSync(raw)), chunk('IEND', Buffer.alloc(0))])
}

const mix = (a: Rgb, b: Rgb, t: number): Rgb => [0, 1, 2].map(i => Math.round(a[i]! + (b[i]! - a[i]!) * Math.max(0, Math.min(1, t)))) as Rgb

/** The R4 motor housing seen from the side: fewer, shorter fins than R3's. */
function housingPhoto(): Buffer {
  const bench: Rgb = [214, 210, 200]
  const metal: Rgb = [120, 124, 128]
  const shade: Rgb = [82, 86, 90]
  return png(320, 200, (x, y) => {
    const bg = mix(bench, [190, 186, 176], y / 200)
    const inBody = x > 70 && x < 250 && y > 70 && y < 150
    const fin = x > 80 && x < 240 && (x - 80) % 32 < 10 && y > 40 && y <= 70
    const shaft = x >= 250 && x < 290 && y > 100 && y < 120
    if (inBody) return mix(metal, shade, (y - 70) / 80)
    if (fin) return mix([150, 154, 158], metal, (70 - y) / 30)
    if (shaft) return [170, 170, 172]
    if (y > 150 && y < 158 && x > 60 && x < 260) return [60, 58, 54]
    return bg
  })
}

/** A thermal image of the battery connector: a hot spot at the contacts. */
function connectorThermal(): Buffer {
  const cold: Rgb = [24, 16, 72]
  const warm: Rgb = [200, 40, 90]
  const hot: Rgb = [255, 220, 80]
  return png(240, 180, (x, y) => {
    const d = Math.hypot(x - 130, y - 95)
    const body = x > 70 && x < 190 && y > 60 && y < 130 ? 0.35 : 0
    const t = Math.max(body, Math.exp(-(d * d) / 1800))
    const stripe = y > 165 ? mix(cold, hot, x / 240) : null
    return stripe ?? (t < 0.5 ? mix(cold, warm, t / 0.5) : mix(warm, hot, (t - 0.5) / 0.5))
  })
}

/** The torque arm on the axle, from above. */
function torqueArmPhoto(): Buffer {
  return png(280, 180, (x, y) => {
    const onArm = Math.abs((y - 90) - (x - 60) * 0.05) < 7 && x > 60 && x < 250
    const hub = Math.hypot(x - 60, y - 90) < 34
    const cell = x > 236 && x < 262 && y > 70 && y < 110
    if (cell) return [40, 120, 110]
    if (hub) return [70, 72, 76]
    if (onArm) return [180, 120, 40]
    return mix([230, 228, 222], [205, 202, 194], (x + y) / 460)
  })
}

/** The thermocouple log behind R5's case temperature reading: one row per climb. */
function caseTempCsv(values: number[]): Buffer {
  const lines = ['climb,finished_at,case_temp,unit,ambient_degC']
  values.forEach((v, i) => lines.push(`${i + 1},2026-04-20T${String(9 + i).padStart(2, '0')}:21:00Z,${v},°C,${(21.5 + i * 0.4).toFixed(1)}`))
  return Buffer.from(`${lines.join('\n')}\n`)
}

export async function seed(knex: Knex): Promise<void> {
  const store = createFileStore(filesConfigFromEnv())
  await trailhopperFiles(knex, store)
  await arcwheelClip(knex, store)
}

async function trailhopperFiles(knex: Knex, store: FileStore): Promise<void> {
  const build = await knex('builds').where({ slug: 'trailhopper' }).first('id')
  if (!build) return
  const person = async (email: string) => (await knex('users').where({ email }).first('id'))?.id ?? null
  const reading = async (target: string, revision: string) => knex('readings as rd')
    .join('targets as t', 't.id', 'rd.target_id').join('revisions as rv', 'rv.id', 'rd.revision_id')
    .where({ 't.build_id': build.id, 't.key': target, 'rv.label': revision })
    .orderBy('rd.created_at').first('rd.id', 'rd.revision_id', 'rd.values_entered')
  const finding = async (title: string) => (await knex('findings').where({ build_id: build.id, title }).first('id'))?.id ?? null

  const engineer = await person('engineer@demo.test')
  const engineer2 = await person('engineer2@demo.test')
  const speedR5 = await reading('top_speed', 'R5')
  const torqueR3 = await reading('wheel_torque', 'R3')
  const tempR5 = await reading('case_temp', 'R5')
  const r4 = await knex('revisions').where({ build_id: build.id, label: 'R4' }).first('id')
  const slipped = await finding('Case temperature slipped in R4: sealed housing, smaller fins')
  const connector = await finding('Battery connector heats after the 20-minute climb')

  const files = [
    { name: 'dyno-run-R5.webm', bytes: () => readFileSync(new URL('./assets/trailhopper-dyno-r5.webm', import.meta.url)), readingId: speedR5?.id, revisionId: speedR5?.revision_id, by: engineer },
    { name: 'torque-arm-setup-R3.png', bytes: torqueArmPhoto, readingId: torqueR3?.id, revisionId: torqueR3?.revision_id, by: engineer },
    { name: 'case-temp-climbs-R5.csv', bytes: () => caseTempCsv(tempR5?.values_entered ?? []), readingId: tempR5?.id, revisionId: tempR5?.revision_id, by: engineer2 },
    { name: 'housing-fins-R4.png', bytes: housingPhoto, revisionId: r4?.id, findingId: slipped, by: engineer2 },
    { name: 'connector-thermal-R5.png', bytes: connectorThermal, findingId: connector, by: engineer2 },
  ]
  for (const f of files) {
    if (await knex('files').where({ build_id: build.id, name: f.name }).first('id')) continue
    await knex.transaction(trx => storeBytes(trx, store, {
      buildId: build.id,
      name: f.name,
      bytes: f.bytes(),
      revisionId: f.revisionId ?? null,
      readingId: f.readingId ?? null,
      findingId: f.findingId ?? null,
      uploadedBy: f.by,
    }))
  }
}

/** Arcwheel R3's exit speed measured on high-speed footage: the clip, and the track reading marked on it. */
async function arcwheelClip(knex: Knex, store: FileStore): Promise<void> {
  const build = await knex('builds').where({ slug: 'arcwheel' }).first('id')
  const revision = build && await knex('revisions').where({ build_id: build.id, label: 'R3' }).first('id', 'frozen_at')
  const target = build && await knex('targets').where({ build_id: build.id, key: 'exit_speed' }).first('id')
  if (!build || !revision || !target || revision.frozen_at) return
  const engineer = (await knex('users').where({ email: 'engineer@demo.test' }).first('id'))?.id ?? null
  await knex.transaction(async (trx) => {
    const file = await trx('files').where({ build_id: build.id, name: ARCWHEEL_CLIP.file }).first('id', 'reading_id')
      ?? { id: await storeBytes(trx, store, {
        buildId: build.id,
        name: ARCWHEEL_CLIP.file,
        bytes: readFileSync(new URL(`./assets/${ARCWHEEL_CLIP.file}`, import.meta.url)),
        revisionId: revision.id,
        readingId: null,
        findingId: null,
        uploadedBy: engineer,
      }), reading_id: null }
    if (file.reading_id) return
    const track = arcwheelTrack()
    await insertReading(trx, { userId: engineer, rigTokenId: null }, { buildId: build.id, body: {
      revision: 'R3',
      target: 'exit_speed',
      track,
      file: file.id,
      method: `footage, ${ARCWHEEL_CLIP.fps} fps, ${track.points.length} frames`,
      takenAt: '2026-05-04T15:30:00Z',
      notes: 'Side-on clip of one ball against the 300 mm rule on the net frame; a check of the Doppler sensor.',
    } })
  })
}
