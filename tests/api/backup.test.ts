import { spawn } from 'node:child_process'
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import knex from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, makeWorld, type World } from '../support/api'
import { ROOT } from '../support/env'
import { streamDownload, uploadOk } from '../support/files'
import { newRevision, newTarget } from '../support/measure'
import { startSecondApp } from '../support/services'

// npm run backup / npm run restore (scripts/backup.sh): a snapshot taken while a writer keeps
// posting readings holds every reading acknowledged before it began, restores into an empty
// database and file store, and the app starts and serves on the restored data.

const RESTORE_URL = process.env.RATCHET_RESTORE_DATABASE_URL ?? ''

function npmRun(what: 'backup' | 'restore', args: string[], env: Record<string, string> = {}): Promise<{ code: number, out: string }> {
  return new Promise((done) => {
    const child = spawn('bash', ['scripts/backup.sh', what, ...args], { cwd: ROOT, env: { ...process.env, ...env } })
    let out = ''
    child.stdout.on('data', (d) => { out += d })
    child.stderr.on('data', (d) => { out += d })
    child.on('exit', code => done({ code: code ?? -1, out }))
  })
}

describe('backup and restore of the whole installation', () => {
  let w: World
  let work: string
  beforeAll(async () => {
    w = await makeWorld()
    work = mkdtempSync(join(tmpdir(), 'ratchet-backup-'))
  })
  afterAll(async () => {
    await closeTestDb()
    rmSync(work, { recursive: true, force: true })
  })

  it('keeps every reading acknowledged before it began, and the app serves the restored data', async () => {
    expect(RESTORE_URL, 'scripts/test.sh provides an empty database to restore into').not.toBe('')
    const t = await newTarget(w.engineer.client, w.build.slug, { unit: 'N', comparator: 'atLeast', threshold: 10 })
    const r = await newRevision(w.engineer.client, w.build.slug, 'R1')
    const evidence = await uploadOk(w.engineer.client, w.build.slug, 'bench log.txt', 'torque run 7\n'.repeat(500))

    // a writer posting readings all along
    const acked: { id: string, at: number }[] = []
    let writing = true
    const writer = (async () => {
      for (let i = 0; writing; i++) {
        const res = await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/readings`, { revision: r.label, target: t.key, values: [10 + (i % 7) * 0.1, 10.2], unit: 'N' })
        expect(res.status).toBe(201)
        acked.push({ id: res.body.reading.id, at: performance.now() })
      }
    })()
    while (acked.length < 20) await new Promise(res => setTimeout(res, 20))

    const began = performance.now()
    const dir = join(work, 'snapshot')
    const backup = await npmRun('backup', [dir])
    expect(backup.code, backup.out).toBe(0)
    expect(backup.out).toMatch(/^backup: .*database [\d.]+ MB .*, \d+ files/m)
    // the writer went on while the backup ran
    const during = acked.filter(a => a.at > began).length
    expect(during).toBeGreaterThan(0)
    writing = false
    await writer
    const before = acked.filter(a => a.at < began).map(a => a.id)
    expect(before.length).toBeGreaterThanOrEqual(20)

    const manifest = JSON.parse(readFileSync(join(dir, 'manifest.json'), 'utf8'))
    expect(manifest).toMatchObject({ format: 'ratchet-backup', version: 1 })
    expect(manifest.files.list.map((f: { sha256: string }) => f.sha256)).toContain(evidence.sha256)

    // a damaged backup is refused before anything is written
    const restoredFiles = join(work, 'restored-files')
    const restoreEnv = { DATABASE_URL: RESTORE_URL, NUXT_FILES_DIR: restoredFiles }
    const dump = join(dir, 'database.dump')
    const original = readFileSync(dump)
    const flipped = Buffer.from(original)
    flipped[flipped.length >> 1]! ^= 0xFF
    writeFileSync(dump, flipped)
    const refused = await npmRun('restore', [dir], restoreEnv)
    expect(refused.code).toBe(2)
    expect(refused.out).toMatch(/database\.dump does not match its checksum/)
    writeFileSync(dump, original)

    const restore = await npmRun('restore', [dir], restoreEnv)
    expect(restore.code, restore.out).toBe(0)
    const restored = knex({ client: 'pg', connection: RESTORE_URL })
    try {
      const ids = new Set((await restored('readings').where({ target_id: t.id }).pluck('id')) as string[])
      const lost = before.filter(id => !ids.has(id))
      expect(lost, `${lost.length} acknowledged readings missing after restore (${during} were written during the backup)`).toEqual([])
      // the cached statistics came with their readings
      const cell = await restored('cell_stats').where({ target_id: t.id, revision_id: r.id }).first()
      expect(cell?.readings).toBe(ids.size)
    }
    finally {
      await restored.destroy()
    }

    // a second restore into the now full database is refused without --force
    const again = await npmRun('restore', [dir], restoreEnv)
    expect(again.code).toBe(2)
    expect(again.out).toMatch(/already holds \d+ tables/)

    // the app starts on the restored data: the same people sign in, the readings and files are there
    const port = Number(process.env.RATCHET_TEST_APP_PORT) + 80
    const stop = await startSecondApp(port, { DATABASE_URL: RESTORE_URL, NUXT_DATABASE_URL: RESTORE_URL, NUXT_FILES_DIR: restoredFiles, RATCHET_QUEUE: 'off' })
    try {
      const base = `http://127.0.0.1:${port}`
      const c = w.engineer.client.at(base)
      const detail = await c.get(`/api/v1/builds/${w.build.slug}/targets/${t.key}`)
      expect(detail.status).toBe(200)
      const served = new Set(detail.body.readings.map((x: { id: string }) => x.id))
      expect(before.every(id => served.has(id))).toBe(true)
      const file = await streamDownload(`/api/v1/files/${evidence.id}`, { cookie: c.cookie, base })
      expect(file.status).toBe(200)
      expect(file.sha256).toBe(evidence.sha256)
    }
    finally {
      await stop()
    }
  })

  it('refuses a folder that is not a finished backup, and a backup into a folder that holds something', async () => {
    const empty = join(work, 'not-a-backup')
    const made = await npmRun('backup', [join(work, 'snapshot')])
    expect(made.code).toBe(2)
    expect(made.out).toMatch(/is not empty/)
    const none = await npmRun('restore', [empty], { DATABASE_URL: RESTORE_URL, NUXT_FILES_DIR: join(work, 'other-files') })
    expect(none.code).toBe(2)
    expect(none.out).toMatch(/no readable manifest\.json: not a finished backup/)
  })
})
