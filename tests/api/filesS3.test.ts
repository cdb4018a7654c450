import { execFile } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import { existsSync, mkdirSync, readdirSync, rmSync, utimesSync } from 'node:fs'
import { join } from 'node:path'
import { Readable } from 'node:stream'
import { promisify } from 'node:util'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { CreateBucketCommand, S3Client } from '@aws-sdk/client-s3'
import { Hash } from '@smithy/core/serde'
import { SignatureV4 } from '@smithy/signature-v4'
import { PART_SIZE, S3Store, type S3Config } from '../../server/utils/files/s3'
import { closeTestDb, makeWorld, testDb, type Client, type World } from '../support/api'
import { ROOT } from '../support/env'
import { byteSource, streamDownload, streamUpload, uploadForm, uploadOk } from '../support/files'
import { startS3Gate, type GateEntry, type S3Gate } from '../support/s3Gate'
import { startS3rver, startSecondApp } from '../support/services'

// The s3 file driver against a real S3-compatible server: s3rver in its own process, behind the
// signature gate of tests/support/s3Gate.ts (s3rver checks no SigV4 signature or payload hash,
// and has no AbortMultipartUpload; the gate adds both). A second app server stores its files there.
// Ports: the app's port + 60 and + 61 for the app servers (the digests test uses + 50), + 70 for s3rver.

const APP_PORT = Number(process.env.RATCHET_TEST_APP_PORT ?? 3100)
const S3_BASE = `http://127.0.0.1:${APP_PORT + 60}`
const WRONG_KEY_BASE = `http://127.0.0.1:${APP_PORT + 61}`
const S3RVER_PORT = APP_PORT + 70
const DATA = join(ROOT, '.data/test/s3rver')
const BUCKET = 'ratchet-evidence'
const REGION = 'us-east-1'
// s3rver's one key pair
const ACCESS = { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' }
// s3 uploads go in parts of 8 MiB (server/utils/s3.ts, no setting): 20 MB is three parts
const PART = PART_SIZE
const MB = 1_000_000
const SIZE = 20 * MB
const MAX_BYTES = 24 * MB
const KEY = /^[0-9a-f]{2}\/[0-9a-f-]{36}$/
// the sha256 of no bytes
const EMPTY_SHA256 = 'e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855'

const run = promisify(execFile)

describe('evidence files in an S3 bucket (s3rver)', () => {
  let gate: S3Gate
  let cfg: S3Config
  const stops: (() => Promise<void>)[] = []
  let w: World
  let engineer: Client
  let reviewer: Client

  const driverEnv = (secretAccessKey = ACCESS.secretAccessKey) => ({
    NUXT_FILES_DRIVER: 's3',
    NUXT_FILES_S3_ENDPOINT: gate.url,
    NUXT_FILES_S3_BUCKET: BUCKET,
    NUXT_FILES_S3_REGION: REGION,
    NUXT_FILES_S3_ACCESS_KEY_ID: ACCESS.accessKeyId,
    NUXT_FILES_S3_SECRET_ACCESS_KEY: secretAccessKey,
    NUXT_FILES_MAX_BYTES: String(MAX_BYTES),
  })

  /** Every object in the bucket, read through the gate. */
  async function objects(): Promise<string[]> {
    const keys: string[] = []
    for await (const o of new S3Store(cfg).list()) keys.push(o.key)
    return keys
  }
  /** Multipart uploads s3rver holds open (its folder of them). */
  const openUploads = () => {
    const dir = join(DATA, BUCKET, '._S3rver_uploads')
    return existsSync(dir) ? readdirSync(dir) : []
  }
  /** s3rver dates an object by its file's mtime: set it, to make an object old. */
  const age = (key: string, when: Date) => utimesSync(join(DATA, BUCKET, `${key}._S3rver_object`), when, when)
  const fileRow = (id: string) => testDb()('files').where({ id }).first()
  const gateSince = (n: number): GateEntry[] => gate.log.slice(n)
  /** A logged request's query names, sorted, but the x-id the SDK adds (the operation's name). */
  const names = (e: GateEntry) => [...e.query.keys()].filter(k => k !== 'x-id').sort().join('&')

  beforeAll(async () => {
    rmSync(DATA, { recursive: true, force: true })
    mkdirSync(DATA, { recursive: true })
    stops.push(await startS3rver(S3RVER_PORT, DATA, join(ROOT, '.data/test/s3rver.log')))
    gate = await startS3Gate({ upstream: `http://127.0.0.1:${S3RVER_PORT}`, dataDir: DATA, region: REGION, secrets: { [ACCESS.accessKeyId]: ACCESS.secretAccessKey } })
    stops.push(gate.close)
    cfg = { endpoint: gate.url, bucket: BUCKET, region: REGION, ...ACCESS }

    // CreateBucket, signed like every request
    const client = new S3Client({ endpoint: gate.url, region: REGION, forcePathStyle: true, credentials: ACCESS })
    const created = await client.send(new CreateBucketCommand({ Bucket: BUCKET }))
    client.destroy()
    expect(created.$metadata.httpStatusCode).toBe(200)

    stops.push(await startSecondApp(APP_PORT + 60, driverEnv()))
    w = await makeWorld()
    engineer = w.engineer.client.at(S3_BASE)
    reviewer = w.reviewer.client.at(S3_BASE)
  })

  afterAll(async () => {
    // everything started here stops, whatever failed (scripts/test.sh stops the processes too)
    for (const stop of stops.reverse()) await stop().catch(err => console.error('stopping:', err))
    await closeTestDb()
  })

  describe('a file of several parts', () => {
    const bytes = byteSource('s3-several-parts')(SIZE)
    let id: string
    let key: string
    let sha256: string

    it('uploads as a multipart upload of 8 MiB parts and downloads byte-identical', async () => {
      const from = gate.log.length
      const up = await streamUpload(`/api/v1/builds/${w.build.slug}/files`, { base: S3_BASE, cookie: engineer.cookie, name: 'dyno-run-R7.bin', size: SIZE, seed: 's3-several-parts' })
      expect(up.status, JSON.stringify(up.body)).toBe(201)
      expect(up.body).toMatchObject({ name: 'dyno-run-R7.bin', size: SIZE, sha256: up.sha256 })
      id = up.body.id
      sha256 = up.sha256
      key = (await fileRow(id)).storage_key
      expect(key).toMatch(KEY)

      const calls = gateSince(from).filter(e => e.key === key)
      expect(calls.map(e => [e.method, names(e), e.query.get('partNumber'), e.bytes, e.status, e.refused])).toEqual([
        ['POST', 'uploads', null, 0, 200, undefined],
        ['PUT', 'partNumber&uploadId', '1', PART, 200, undefined],
        ['PUT', 'partNumber&uploadId', '2', PART, 200, undefined],
        ['PUT', 'partNumber&uploadId', '3', SIZE - 2 * PART, 200, undefined],
        ['POST', 'uploadId', null, expect.any(Number), 200, undefined],
      ])
      expect(await objects()).toContain(key)
      expect(openUploads()).toEqual([])

      const down = await streamDownload(`/api/v1/files/${id}`, { base: S3_BASE, cookie: reviewer.cookie })
      expect(down.status).toBe(200)
      expect(down.bytes).toBe(SIZE)
      expect(down.sha256).toBe(sha256)
      expect(down.headers.get('etag')).toBe(`"${sha256}"`)
      expect(down.headers.get('content-length')).toBe(String(SIZE))
      expect(down.headers.get('content-disposition')).toBe('attachment; filename="dyno-run-R7.bin"')
      expect(down.headers.get('accept-ranges')).toBe('bytes')
    })

    it.each([
      ['across the first part boundary', PART - 100, PART + 99],
      ['the first byte', 0, 0],
      ['the last 100 bytes', SIZE - 100, SIZE - 1],
    ])('a range %s is fetched as a range from the bucket, exactly those bytes', async (_what, start, end) => {
      const from = gate.log.length
      const res = await fetch(`${S3_BASE}/api/v1/files/${id}`, { headers: { cookie: reviewer.cookie, range: `bytes=${start}-${end}` } })
      expect(res.status).toBe(206)
      expect(res.headers.get('content-range')).toBe(`bytes ${start}-${end}/${SIZE}`)
      expect(res.headers.get('content-length')).toBe(String(end - start + 1))
      expect(Buffer.from(await res.arrayBuffer()).equals(bytes.subarray(start, end + 1))).toBe(true)
      expect(gateSince(from).map(e => [e.method, e.key, e.range, e.status])).toEqual([['GET', key, `bytes=${start}-${end}`, 206]])
    })

    it('If-None-Match with the ETag is a 304 without touching the bucket; a range past the end is a 416', async () => {
      const from = gate.log.length
      const cached = await fetch(`${S3_BASE}/api/v1/files/${id}`, { headers: { 'cookie': reviewer.cookie, 'if-none-match': `"${sha256}"` } })
      expect(cached.status).toBe(304)
      const past = await fetch(`${S3_BASE}/api/v1/files/${id}`, { headers: { cookie: reviewer.cookie, range: `bytes=${SIZE}-` } })
      expect(past.status).toBe(416)
      expect(past.headers.get('content-range')).toBe(`bytes */${SIZE}`)
      expect(gateSince(from)).toEqual([])
    })
  })

  it('a small file goes in one PUT, is served inline under its name, and deleting it removes the object', async () => {
    const from = gate.log.length
    const f = await uploadOk(engineer, w.build.slug, 'Prüfstand Lauf 3.csv', 'zeit,moment\n0,41.2\n')
    const key = (await fileRow(f.id)).storage_key
    expect(gateSince(from).filter(e => e.key === key).map(e => [e.method, names(e), e.status])).toEqual([['PUT', '', 200]])
    const res = await reviewer.get(`/api/v1/files/${f.id}`)
    expect(res.status).toBe(200)
    expect(res.body).toBe('zeit,moment\n0,41.2\n')
    expect(res.headers.get('etag')).toBe(`"${f.sha256}"`)
    expect(res.headers.get('content-type')).toBe('text/csv; charset=utf-8')
    expect(res.headers.get('content-disposition')).toBe('inline; filename="Prufstand Lauf 3.csv"; filename*=UTF-8\'\'Pr%C3%BCfstand%20Lauf%203.csv')
    expect(await objects()).toContain(key)

    expect((await reviewer.delete(`/api/v1/files/${f.id}`)).status).toBe(403)
    expect(await objects()).toContain(key)
    expect((await engineer.delete(`/api/v1/files/${f.id}`)).status).toBe(204)
    expect(await fileRow(f.id)).toBeUndefined()
    expect(await objects()).not.toContain(key)
    expect((await reviewer.get(`/api/v1/files/${f.id}`)).status).toBe(404)
  })

  it('over the size limit: 413, no row, no object, and the multipart upload aborted', async () => {
    const rowsBefore = await testDb()('files').where({ build_id: w.build.id }).count({ n: '*' }).first()
    const objectsBefore = await objects()
    const from = gate.log.length
    const res = await streamUpload(`/api/v1/builds/${w.build.slug}/files`, { base: S3_BASE, cookie: engineer.cookie, name: 'too-big.bin', size: MAX_BYTES + 1 })
    expect(res.status).toBe(413)
    expect(res.body.message).toMatch(/larger than the limit of 24\.0 MB/)

    // parts went up before the limit was crossed, then the upload was aborted
    const calls = gateSince(from)
    const started = calls.find(e => e.method === 'POST' && e.query.has('uploads'))!
    expect(started.status).toBe(200)
    expect(calls.filter(e => e.method === 'PUT' && e.key === started.key).length).toBeGreaterThanOrEqual(2)
    expect(calls.filter(e => e.method === 'DELETE' && e.key === started.key && e.query.has('uploadId')).map(e => e.status)).toEqual([204])
    expect(calls.some(e => e.method === 'POST' && e.query.has('uploadId'))).toBe(false)
    expect(openUploads()).toEqual([])
    expect(await objects()).toEqual(objectsBefore)
    expect(await testDb()('files').where({ build_id: w.build.id }).count({ n: '*' }).first()).toEqual(rowsBefore)
  })

  it('the sweep script removes an old object without a row, and leaves young ones, rows’ objects and others’ objects', async () => {
    const store = new S3Store(cfg)
    const old = new Date(Date.now() - 3 * 3600_000)
    const put = async (key: string, body: string) => {
      await store.put(key, Readable.from([Buffer.from(body)]))
      return key
    }
    const newKey = () => {
      const id = randomUUID()
      return `${id.slice(0, 2)}/${id}`
    }
    const oldOrphan = await put(newKey(), 'left by a crash')
    const youngOrphan = await put(newKey(), 'an upload writing its row')
    const foreign = await put('exports/2026-01.tar', 'not the app’s')
    const kept = await uploadOk(engineer, w.build.slug, 'kept.txt', 'has a row')
    const keptKey = (await fileRow(kept.id)).storage_key
    // everything old but one orphan (the bucket also holds the other tests' files)
    for (const k of await objects()) if (k !== youngOrphan) age(k, old)

    const sweep = (...args: string[]) => run(process.execPath, ['--import', 'tsx', 'scripts/sweep-files.ts', '--grace-hours', '1', ...args], {
      cwd: ROOT, env: { ...process.env, ...driverEnv() },
    })
    const ours = (await objects()).filter(k => KEY.test(k)).length
    const dry = await sweep('--dry-run')
    expect(dry.stdout).toContain(`sweep (s3): ${ours} stored, 1 without a row would be removed, 1 younger than 1 h left alone`)
    expect(await objects()).toContain(oldOrphan)

    const done = await sweep()
    expect(done.stdout).toContain(`sweep (s3): ${ours} stored, 1 without a row removed, 1 younger than 1 h left alone`)
    const left = await objects()
    expect(left).not.toContain(oldOrphan)
    expect(left).toEqual(expect.arrayContaining([youngOrphan, foreign, keptKey]))
    expect((await reviewer.get(`/api/v1/files/${kept.id}`)).body).toBe('has a row')
    await store.remove(youngOrphan)
    await store.remove(foreign)
  })

  describe('signatures', () => {
    it('the gate refuses a wrong secret key and a body that isn’t the one hashed; s3rver alone checks only the key id', async () => {
      const key = `wr/${randomUUID()}`
      await expect(new S3Store({ ...cfg, secretAccessKey: 'not-the-secret' }).put(key, Readable.from([Buffer.from('x')]))).rejects.toThrow(/403 .*SignatureDoesNotMatch/s)
      expect(gate.log.at(-1)!.refused).toBe('SignatureDoesNotMatch')

      // a PUT signed for an empty body (the AWS signer), sent with another
      const url = new URL(`${gate.url}/${BUCKET}/${key}`)
      const signer = new SignatureV4({ service: 's3', region: REGION, credentials: ACCESS, sha256: Hash.bind(null, 'sha256'), uriEscapePath: false })
      const signed = await signer.sign({ method: 'PUT', protocol: 'http:', hostname: url.hostname, port: Number(url.port), path: url.pathname, query: {}, headers: { 'host': url.host, 'x-amz-content-sha256': EMPTY_SHA256 } })
      const { host: _host, ...headers } = signed.headers
      const swapped = await fetch(url, { method: 'PUT', headers, body: 'not empty' })
      expect(swapped.status).toBe(403)
      expect(await swapped.text()).toContain('XAmzContentSHA256Mismatch')
      expect(await objects()).not.toContain(key)

      // why the gate is there: s3rver itself takes the wrong secret, and refuses only an unknown key id
      const direct = { ...cfg, endpoint: `http://127.0.0.1:${S3RVER_PORT}` }
      await new S3Store({ ...direct, secretAccessKey: 'not-the-secret' }).put(key, Readable.from([Buffer.from('x')]))
      expect(await objects()).toContain(key)
      await new S3Store(direct).remove(key)
      await expect(new S3Store({ ...direct, accessKeyId: 'NOBODY' }).put(key, Readable.from([Buffer.from('x')]))).rejects.toThrow(/403 .*InvalidAccessKeyId/s)
    })

    it('an app with the wrong secret key: uploads are a 503 that keeps nothing, downloads a 503', async () => {
      const existing = await uploadOk(engineer, w.build.slug, 'readable.txt', 'stored by the right key')
      const stop = await startSecondApp(APP_PORT + 61, driverEnv('not-the-secret'))
      try {
        const wrong = w.engineer.client.at(WRONG_KEY_BASE)
        const rowsBefore = await testDb()('files').where({ build_id: w.build.id }).count({ n: '*' }).first()
        const objectsBefore = await objects()
        const from = gate.log.length
        const up = await wrong.post(`/api/v1/builds/${w.build.slug}/files`, uploadForm('refused.txt', 'never stored'))
        expect(up.status).toBe(503)
        expect(up.body.message).toMatch(/can’t be stored right now/)
        expect(gateSince(from).some(e => e.refused === 'SignatureDoesNotMatch')).toBe(true)
        expect(await objects()).toEqual(objectsBefore)
        expect(await testDb()('files').where({ build_id: w.build.id }).count({ n: '*' }).first()).toEqual(rowsBefore)

        const down = await w.reviewer.client.at(WRONG_KEY_BASE).get(`/api/v1/files/${existing.id}`)
        expect(down.status).toBe(503)
        expect(down.headers.get('content-disposition')).toBeNull()
      }
      finally {
        await stop()
      }
      expect((await reviewer.get(`/api/v1/files/${existing.id}`)).body).toBe('stored by the right key')
    })
  })
})
