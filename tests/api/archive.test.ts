import { createHash, randomBytes, randomUUID } from 'node:crypto'
import { gunzipSync, gzipSync } from 'node:zlib'
import { extract as tarExtract, pack as tarPack } from 'tar-stream'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { ArchiveImportedOut } from '../../server/utils/api/responses'
import { closeTestDb, makeWorld, mustSucceed, testDb, type World } from '../support/api'
import { BASE_URL } from '../support/env'
import { PNG_1x1, byteSource, storedFiles, streamDownload, uploadOk } from '../support/files'
import { addReading, newRevision, newTarget } from '../support/measure'

// Build archives out and in: a build made through the API is exported, imported into another
// team and compared field by field (ids and slugs aside); damaged, hostile and foreign archives
// are refused with their problem named and leave no row and no stored byte behind.

const sha = (b: Buffer | Uint8Array) => createHash('sha256').update(b).digest('hex')

interface Entry { name: string, data: Buffer }

async function unpack(gz: Buffer): Promise<Entry[]> {
  const ex = tarExtract()
  const out: Entry[] = []
  const done = (async () => {
    for await (const entry of ex) {
      const chunks: Buffer[] = []
      for await (const c of entry) chunks.push(c as Buffer)
      out.push({ name: entry.header.name, data: Buffer.concat(chunks) })
    }
  })()
  ex.end(gunzipSync(gz))
  await done
  return out
}

/** A tar.gz of the entries; the manifest (first entry) is rewritten to match unless `keepManifest`. */
async function repack(entries: Entry[], opts: { keepManifest?: boolean, manifest?: (m: any) => void } = {}): Promise<Buffer> {
  let list = entries
  if (!opts.keepManifest) {
    const manifest = JSON.parse(entries[0]!.data.toString())
    manifest.files = entries.slice(1).map(e => ({ name: e.name, size: e.data.length, sha256: sha(e.data) }))
    opts.manifest?.(manifest)
    list = [{ name: 'manifest.json', data: Buffer.from(JSON.stringify(manifest)) }, ...entries.slice(1)]
  }
  const p = tarPack()
  const chunks: Buffer[] = []
  const collected = (async () => {
    for await (const c of p) chunks.push(c as Buffer)
  })()
  for (const e of list) p.entry({ name: e.name, size: e.data.length }, e.data)
  p.finalize()
  await collected
  return gzipSync(Buffer.concat(chunks))
}

const form = (bytes: Buffer, fields: Record<string, string> = {}) => {
  const f = new FormData()
  for (const [k, v] of Object.entries(fields)) f.append(k, v)
  f.append('file', new Blob([bytes as BlobPart], { type: 'application/gzip' }), 'build.tar.gz')
  return f
}

/** Removes ids, slugs and the team's own members, which differ between two copies of a build. */
function strip(x: unknown): unknown {
  if (Array.isArray(x)) return x.map(strip)
  if (x && typeof x === 'object') {
    return Object.fromEntries(Object.entries(x as Record<string, unknown>)
      .filter(([k]) => !/^(id|slug|teamId|teamSlug|teamName|members|role|buildId)$/.test(k) && !/Id$/.test(k))
      .map(([k, v]) => [k, strip(v)]))
  }
  return x
}

describe('build archives', () => {
  let w: World
  let otherTeam: { id: string, slug: string }
  let archive: Buffer
  let entries: Entry[]
  let source: { id: string, slug: string }
  const bigSeed = 'archive-evidence'
  const BIG = 3 * 1024 * 1024 + 17

  beforeAll(async () => {
    w = await makeWorld()
    const c = w.owner.client
    const b = w.build.slug
    source = w.build
    const team = await mustSucceed(c.post('/api/v1/teams', { name: 'Second workshop' }), 'team')
    otherTeam = { id: team.body.id, slug: team.body.slug }

    // targets: two measured, one derived (common practice, no source: an invented scenario)
    await newTarget(c, b, { key: 'payload_mass', name: 'Payload mass', unit: 'kg', comparator: 'atLeast', threshold: 2, noiseBand: 0.05 })
    await newTarget(c, b, { key: 'exit_speed', name: 'Exit speed', unit: 'm/s', comparator: 'between', threshold: 8, thresholdHigh: 14 })
    await newTarget(c, b, { key: 'kinetic_energy', name: 'Kinetic energy', unit: 'J', comparator: 'atLeast', threshold: 150, formula: '0.5 * payload_mass * exit_speed^2' })
    await newRevision(c, b, 'R1', { summary: 'First frame', changes: ['Welded frame'], parameters: [{ name: 'Plate', value: 6, unit: 'mm' }, { name: 'Part', value: 'PX-12', unit: null }] })
    await newRevision(c, b, 'R2', { parent: 'R1', builtOn: '2026-11-18', summary: 'Stiffer frame', parameters: [{ name: 'Plate', value: 8, unit: 'mm' }] })
    // samples with a resolution, in another unit of the quantity; stated results with and without dof
    await addReading(c, b, { revision: 'R1', target: 'payload_mass', values: [2010, 2030, 1990], unit: 'g', resolution: 10, method: 'bench scale', notes: 'three lifts' })
    await addReading(w.engineer.client, b, { revision: 'R1', target: 'exit_speed', value: 9.4, u: 0.2, dof: 12, unit: 'm/s', method: 'light gate' })
    await addReading(c, b, { revision: 'R2', target: 'payload_mass', value: 2.4, u: 0.01, unit: 'kg', takenAt: '2026-11-20T10:30:00Z' })
    await addReading(c, b, { revision: 'R2', target: 'exit_speed', values: [11.2, 11.5, 11.1, 11.6], unit: 'm/s', resolution: 0.1 })
    // a rig's reading: its token is not carried
    const rig = (await fetch(`${BASE_URL}/api/v1/builds/${b}/readings`, { method: 'POST', headers: { 'authorization': `Bearer ${w.ownToken}`, 'content-type': 'application/json' }, body: JSON.stringify({ revision: 'R2', target: 'exit_speed', values: [11.3], unit: 'm/s' }) }))
    expect(rig.status).toBe(201)
    await mustSucceed(w.reviewer.client.post(`/api/v1/builds/${b}/revisions/R1/freeze`), 'sign-off')

    // findings moved between lanes, with fixes and comments
    const f1 = await mustSucceed(c.post(`/api/v1/builds/${b}/findings`, { title: 'Frame flexes at launch', description: 'Seen on the **slow** camera', severity: 'blocks-target', seenOn: 'R1', targets: ['exit_speed'] }), 'finding')
    await mustSucceed(c.post(`/api/v1/findings/${f1.body.id}/move`, { lane: 'traced', version: f1.body.version }), 'move')
    await mustSucceed(c.post(`/api/v1/findings/${f1.body.id}/fixes`, { description: 'Thicker plate', state: 'landed', landedIn: 'R2', ownerId: w.engineer.user.id }), 'fix')
    await mustSucceed(c.post(`/api/v1/findings/${f1.body.id}/fixes`, { description: 'Gusset at the joint', dueOn: '2026-12-20' }), 'fix 2')
    const current = (await c.get(`/api/v1/findings/${f1.body.id}`)).body.version
    await mustSucceed(c.post(`/api/v1/findings/${f1.body.id}/move`, { lane: 'retest', version: current }), 'move to retest')
    await mustSucceed(c.post(`/api/v1/findings/${f1.body.id}/comments`, { body: 'Strain gauge shows half the flex on R2' }), 'comment')
    await mustSucceed(w.reviewer.client.post(`/api/v1/findings/${f1.body.id}/comments`, { body: 'Agreed, retest at full load' }), 'comment 2')
    const f2 = await mustSucceed(c.post(`/api/v1/builds/${b}/findings`, { title: 'Guard gap near the flywheel', severity: 'safety', seenOn: 'R2' }), 'safety finding')
    // evidence: a photo on a finding, a log on a revision, a larger file streamed
    await uploadOk(c, b, 'flex.png', PNG_1x1, { finding: f1.body.id })
    await uploadOk(w.engineer.client, b, 'launch-log.txt', 'launch 1: 11.2 m/s\n', { revision: 'R2' })
    await uploadOk(c, b, 'footage.bin', byteSource(bigSeed)(BIG), { finding: f2.body.id })

    const res = await fetch(`${BASE_URL}/api/v1/builds/${b}/export`, { headers: { cookie: w.engineer.client.cookie } })
    expect(res.status).toBe(200)
    expect(res.headers.get('content-type')).toBe('application/gzip')
    expect(res.headers.get('content-disposition')).toContain('.tar.gz')
    archive = Buffer.from(await res.arrayBuffer())
    entries = await unpack(archive)
  }, 120_000)

  afterAll(closeTestDb)

  it('holds a manifest naming every entry with its size and sha256, then the tables, the CSVs and the evidence bytes', async () => {
    expect(entries[0]!.name).toBe('manifest.json')
    const manifest = JSON.parse(entries[0]!.data.toString())
    expect(manifest).toMatchObject({ format: 'ratchet-build-archive', version: 1, build: { slug: source.slug } })
    expect(Date.now() - Date.parse(manifest.exportedAt)).toBeLessThan(120_000)
    expect(manifest.files.map((f: { name: string }) => f.name)).toEqual(entries.slice(1).map(e => e.name))
    for (const [i, f] of manifest.files.entries()) {
      expect(f.size, f.name).toBe(entries[i + 1]!.data.length)
      expect(f.sha256, f.name).toBe(sha(entries[i + 1]!.data))
    }
    const names = entries.map(e => e.name)
    for (const t of ['builds', 'targets', 'revisions', 'readings', 'cell_stats', 'findings', 'finding_targets', 'fixes', 'finding_events', 'finding_comments', 'files', 'events']) {
      expect(names).toContain(`tables/${t}.json`)
    }
    expect(names).toContain('readings.csv')
    expect(names).toContain('scoreboard.csv')
    // counts as the database has them
    const db = testDb()
    expect(manifest.counts).toMatchObject({ targets: 3, revisions: 2, readings: 5, findings: 2, fixes: 2, finding_comments: 2, files: 3, evidenceFiles: 3 })
    expect(manifest.counts.cell_stats).toBe(Number((await db('cell_stats').where({ build_id: source.id }).count({ n: '*' }))[0]!.n))
    // every column of each row, people by name and e-mail
    const table = (t: string) => JSON.parse(entries.find(e => e.name === `tables/${t}.json`)!.data.toString())
    const readingColumns = (await db('information_schema.columns').where({ table_name: 'readings', table_schema: 'public' }).pluck('column_name')).sort()
    const readings = table('readings')
    for (const r of readings) expect(Object.keys(r).sort()).toEqual(readingColumns)
    const stated = readings.find((r: any) => r.stated_dof === 12)
    expect(stated).toMatchObject({ values_entered: [9.4], stated_u_entered: 0.2, method: 'light gate', taken_by: { name: 'Eno Engineer', email: w.engineer.email } })
    const grams = readings.find((r: any) => r.unit_entered === 'g')
    expect(grams).toMatchObject({ values_entered: [2010, 2030, 1990], resolution_entered: 10, n: 3 })
    grams.values_si.forEach((v: number, i: number) => expect(v).toBeCloseTo([2.01, 2.03, 1.99][i]!, 12))
    expect(readings.filter((r: any) => r.rig_token_id !== null)).toHaveLength(1)
    const comments = table('finding_comments')
    expect(comments.map((c: any) => c.author_id)).toEqual(expect.arrayContaining([{ name: 'Rae Reviewer', email: w.reviewer.email }]))
    expect(table('revisions').find((r: any) => r.label === 'R1')).toMatchObject({ frozen_by: { name: 'Rae Reviewer', email: w.reviewer.email }, changes: ['Welded frame'] })
    expect(table('finding_events').map((e: any) => e.detail?.to ?? e.kind)).toEqual(expect.arrayContaining(['traced', 'retest']))
    // evidence bytes as stored
    const files = await db('files').where({ build_id: source.id })
    for (const f of files) expect(sha(entries.find(e => e.name === `files/${f.id}`)!.data)).toBe(f.sha256)
    expect(entries.find(e => e.name === 'readings.csv')!.data.toString()).toContain('light gate')
  })

  async function importInto(team: string, bytes: Buffer, fields: Record<string, string> = {}, client = w.owner.client) {
    return await client.post(`/api/v1/teams/${team}/import`, form(bytes, fields))
  }

  it('imports as a new build of another team that reads exactly as the original: scoreboard, board, readings, files', async () => {
    const res = await importInto(otherTeam.slug, archive)
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    expect(ArchiveImportedOut.safeParse(res.body).success).toBe(true)
    const copy = res.body.build as { id: string, slug: string }
    expect(copy.id).not.toBe(source.id)
    const db = testDb()
    expect((await db('builds').where({ id: copy.id }).first()).team_id).toBe(otherTeam.id)

    const c = w.owner.client
    const [a, b] = await Promise.all([c.get(`/api/v1/builds/${source.slug}/scoreboard`), c.get(`/api/v1/builds/${copy.slug}/scoreboard`)])
    expect(a.status).toBe(200)
    expect(b.body.targets.length).toBe(3)
    expect(strip(b.body)).toEqual(strip(a.body))
    const [boardA, boardB] = await Promise.all([c.get(`/api/v1/builds/${source.slug}/findings/board`), c.get(`/api/v1/builds/${copy.slug}/findings/board`)])
    expect(boardB.body.findings.map((f: any) => f.lane).sort()).toEqual(['retest', 'spotted'])
    expect(strip(boardB.body)).toEqual(strip(boardA.body))
    // a finding's detail: history, fixes, comments
    const detailOf = async (slug: string) => {
      const list = (await c.get(`/api/v1/builds/${slug}/findings/board`)).body.findings.find((f: any) => f.severity === 'blocks-target')
      return (await c.get(`/api/v1/findings/${list.id}`)).body
    }
    const [dA, dB] = await Promise.all([detailOf(source.slug), detailOf(copy.slug)])
    expect(dB.fixes.length).toBe(2)
    expect(strip(dB)).toEqual(strip(dA))

    // every reading, field by field (ids aside), people matched by e-mail, no rig token
    const readingsOf = (buildId: string) => db('readings as r').join('targets as t', 't.id', 'r.target_id').join('revisions as v', 'v.id', 'r.revision_id')
      .where('t.build_id', buildId).orderBy(['t.key', 'v.label', 'r.created_at'])
      .select('t.key', 'v.label', 'r.*')
    const [ra, rb] = await Promise.all([readingsOf(source.id), readingsOf(copy.id)])
    expect(rb).toHaveLength(5)
    const without = (r: any, cols: string[]) => Object.fromEntries(Object.entries(r).filter(([k]) => !cols.includes(k)))
    expect(rb.map((r: any) => without(r, ['id', 'target_id', 'revision_id', 'rig_token_id']))).toEqual(ra.map((r: any) => without(r, ['id', 'target_id', 'revision_id', 'rig_token_id'])))
    expect(rb.every((r: any) => r.rig_token_id === null)).toBe(true)
    const cellsOf = (buildId: string) => db('cell_stats as c').join('targets as t', 't.id', 'c.target_id').join('revisions as v', 'v.id', 'c.revision_id')
      .where('c.build_id', buildId).orderBy(['t.key', 'v.label']).select('t.key', 'v.label', 'c.*')
    const [ca, cb] = await Promise.all([cellsOf(source.id), cellsOf(copy.id)])
    expect(cb.map((r: any) => without(r, ['target_id', 'revision_id', 'build_id', 'updated_at']))).toEqual(ca.map((r: any) => without(r, ['target_id', 'revision_id', 'build_id', 'updated_at'])))
    // the revision tree and sign-off came along
    const r2 = await db('revisions').where({ build_id: copy.id, label: 'R2' }).first()
    const r1 = await db('revisions').where({ build_id: copy.id, label: 'R1' }).first()
    expect(r2.parent_id).toBe(r1.id)
    expect(r1.frozen_by).toBe(w.reviewer.user.id)
    // imported events are history: none waits to be sent
    expect(await db('events').where({ build_id: copy.id }).whereNull('fanned_out_at').count({ n: '*' })).toEqual([{ n: '0' }])
    expect(Number((await db('events').where({ build_id: copy.id }).count({ n: '*' }))[0]!.n)).toBe(Number((await db('events').where({ build_id: source.id }).count({ n: '*' }))[0]!.n))

    // the files: same names, sizes and checksums, and the bytes served hash to them
    const [fa, fb] = await Promise.all([c.get(`/api/v1/builds/${source.slug}/files`), c.get(`/api/v1/builds/${copy.slug}/files`)])
    expect(fb.body.items).toHaveLength(3)
    const pick = (f: any) => ({ name: f.name, size: f.size, sha256: f.sha256, contentType: f.contentType, kind: f.kind, revision: f.revision, finding: f.finding?.title ?? null })
    const byName = (xs: any[]) => [...xs].sort((x, y) => x.name.localeCompare(y.name)).map(pick)
    expect(byName(fb.body.items)).toEqual(byName(fa.body.items))
    for (const f of fb.body.items) {
      const got = await streamDownload(`/api/v1/files/${f.id}`, { cookie: c.cookie })
      expect(got.status).toBe(200)
      expect(got.sha256).toBe(f.sha256)
    }
    const big = fb.body.items.find((f: any) => f.name === 'footage.bin')
    expect(big.size).toBe(BIG)
    expect(big.sha256).toBe(sha(byteSource(bigSeed)(BIG)))
  }, 120_000)

  it('imports the same archive twice as two builds with distinct slugs, and takes a new name', async () => {
    const one = await importInto(otherTeam.slug, archive)
    const two = await importInto(otherTeam.slug, archive, { name: 'Launcher, second copy' })
    expect(one.status).toBe(201)
    expect(two.status).toBe(201)
    expect(one.body.build.slug).not.toBe(two.body.build.slug)
    expect(one.body.build.id).not.toBe(two.body.build.id)
    expect(one.body.build.slug.startsWith(source.slug)).toBe(true)
    expect((await testDb()('builds').where({ id: two.body.build.id }).first()).name).toBe('Launcher, second copy')
    // the file rows of the two copies point at bytes of their own
    const keys = await testDb()('files').whereIn('build_id', [one.body.build.id, two.body.build.id]).pluck('storage_key')
    expect(new Set(keys).size).toBe(6)
  }, 60_000)

  it('keeps a person without an account here by name, and sets the reference to null', async () => {
    const changed = entries.map((e) => {
      if (e.name !== 'tables/readings.json') return e
      const rows = JSON.parse(e.data.toString())
      for (const r of rows) if (r.taken_by?.email === w.engineer.email) r.taken_by = { name: 'Ada Visitor', email: `gone-${randomBytes(4).toString('hex')}@example.test` }
      return { name: e.name, data: Buffer.from(JSON.stringify(rows)) }
    })
    const res = await importInto(otherTeam.slug, await repack(changed))
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    const r = await testDb()('readings as r').join('targets as t', 't.id', 'r.target_id').where('t.build_id', res.body.build.id).where('r.method', 'light gate').first('r.*')
    expect(r.taken_by).toBeNull()
    expect(r.notes).toContain('Taken by Ada Visitor.')
  }, 60_000)

  describe('refuses a bad archive with its problem named, keeping nothing', () => {
    async function refusedWith(bytes: Buffer, status: number, message: RegExp) {
      const db = testDb()
      const count = async () => Number((await db('builds').where({ team_id: otherTeam.id }).count({ n: '*' }))[0]!.n)
      const before = { builds: await count(), files: storedFiles().sort(), rows: await db('files').count({ n: '*' }) }
      const res = await importInto(otherTeam.slug, bytes)
      expect(res.status, JSON.stringify(res.body)).toBe(status)
      expect(res.body.message).toMatch(message)
      expect(await count()).toBe(before.builds)
      expect(await db('files').count({ n: '*' })).toEqual(before.rows)
      expect(storedFiles().sort()).toEqual(before.files)
      return res
    }

    it('a truncated archive', async () => {
      await refusedWith(archive.subarray(0, Math.floor(archive.length * 0.6)), 400, /truncated or corrupt/)
      await refusedWith(randomBytes(5000), 400, /truncated or corrupt/)
    }, 30_000)

    it('a file whose bytes changed (one bit)', async () => {
      const big = entries.find(e => e.name.startsWith('files/') && e.data.length > 1_000_000)!
      const flipped = Buffer.from(big.data)
      flipped[flipped.length - 10]! ^= 0x04
      const res = await refusedWith(await repack(entries.map(e => (e === big ? { name: e.name, data: flipped } : e)), { keepManifest: true }), 422, /does not match its sha256/)
      expect(res.body.message).toContain(big.name)
    }, 30_000)

    it('entry names with ".." or an absolute path', async () => {
      await refusedWith(await repack([...entries, { name: '../../escape.txt', data: Buffer.from('x') }]), 400, /parent folder/)
      await refusedWith(await repack([...entries, { name: '/tmp/escape.txt', data: Buffer.from('x') }]), 400, /absolute path/)
    }, 30_000)

    it('a decompression bomb, by its ratio and by its declared size', async () => {
      const zeros = { name: `files/${randomUUID()}`, data: Buffer.alloc(40 * 1024 * 1024) }
      await refusedWith(await repack([entries[0]!, zeros]), 413, /decompression bomb/)
      await refusedWith(await repack(entries, { manifest: m => m.files.push({ name: `files/${randomUUID()}`, size: 10 ** 12, sha256: '0'.repeat(64) }) }), 413, /declares/)
    }, 60_000)

    it('a manifest of a newer format version, and a foreign archive', async () => {
      await refusedWith(await repack(entries, { manifest: (m) => { m.version = 2 } }), 422, /version 2, made by a newer Ratchet/)
      await refusedWith(await repack(entries, { manifest: (m) => { m.format = 'something-else' } }), 422, /not a Ratchet build archive/)
      await refusedWith(await repack([{ name: 'notes.txt', data: Buffer.from('hello') }], { keepManifest: true }), 422, /not a Ratchet build archive/)
    }, 30_000)

    it('more than 10,000 values in one cell, and a row the database refuses', async () => {
      const readings = JSON.parse(entries.find(e => e.name === 'tables/readings.json')!.data.toString())
      const base = readings.find((r: any) => r.unit_entered === 'g')
      const many = (k: number) => ({ ...base, id: randomUUID(), values_si: Array.from({ length: 6000 }, (_, i) => 2 + (i + k) * 1e-6), values_entered: Array.from({ length: 6000 }, (_, i) => 2000 + (i + k) * 1e-3), n: 6000 })
      const crowded = entries.map(e => (e.name === 'tables/readings.json' ? { name: e.name, data: Buffer.from(JSON.stringify([...readings, many(0), many(1)])) } : e))
      await refusedWith(await repack(crowded), 422, /holds 12,00\d values; .* at most 10,000/)
      const findings = JSON.parse(entries.find(e => e.name === 'tables/findings.json')!.data.toString())
      findings[0].lane = 'limbo'
      const odd = entries.map(e => (e.name === 'tables/findings.json' ? { name: e.name, data: Buffer.from(JSON.stringify(findings)) } : e))
      await refusedWith(await repack(odd), 422, /tables\/findings\.json: a row breaks a rule/)
    }, 60_000)

    it('a formula or a unit that can’t be read, a reading in a unit of another quantity', async () => {
      const edit = (name: string, change: (rows: any[]) => void) => entries.map((e) => {
        if (e.name !== name) return e
        const rows = JSON.parse(e.data.toString())
        change(rows)
        return { name: e.name, data: Buffer.from(JSON.stringify(rows)) }
      })
      await refusedWith(await repack(edit('tables/targets.json', (rows) => { rows.find((t: any) => t.formula).formula = '0.5 * payload_mass * no_such_key' })), 422, /target "kinetic_energy": formula: .*no_such_key/)
      await refusedWith(await repack(edit('tables/targets.json', (rows) => { rows.find((t: any) => t.key === 'exit_speed').unit = 'furlongs per fortnightly blob' })), 422, /target "exit_speed"/)
      await refusedWith(await repack(edit('tables/readings.json', (rows) => { rows.find((r: any) => r.unit_entered === 'g').unit_entered = 'V' })), 422, /a reading of "payload_mass" in "V"/)
    }, 60_000)

    it('an entry missing, or of another size than its manifest says', async () => {
      await refusedWith(await repack(entries.filter(e => e.name !== 'tables/fixes.json'), { keepManifest: true }), 422, /lacks "tables\/fixes\.json"/)
      await refusedWith(await repack(entries, { manifest: (m) => { m.files.find((f: any) => f.name === 'readings.csv').size += 1 } }), 422, /"readings\.csv" is \d+ bytes in the archive, but its manifest says/)
    }, 60_000)
  })

  it('lets Owners and Engineers export and import; a Reviewer gets 403, an outsider 404, a rig token 403', async () => {
    const path = `/api/v1/builds/${w.build.slug}/export`
    expect((await w.reviewer.client.get(path)).status).toBe(403)
    expect((await w.outsider.client.get(path)).status).toBe(404)
    const rig = await fetch(`${BASE_URL}${path}`, { headers: { authorization: `Bearer ${w.ownToken}` } })
    expect(rig.status).toBe(403)
    await rig.arrayBuffer()
    expect((await importInto(w.team.slug, archive, {}, w.reviewer.client)).status).toBe(403)
    expect((await importInto(w.team.slug, archive, {}, w.outsider.client)).status).toBe(404)
    expect((await importInto(w.team.slug, archive, {}, w.engineer.client)).status).toBe(201)
  }, 60_000)
})
