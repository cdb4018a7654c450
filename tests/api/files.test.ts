import { createHash, randomBytes, randomUUID } from 'node:crypto'
import { existsSync, mkdirSync, statSync, utimesSync, writeFileSync } from 'node:fs'
import { request } from 'node:http'
import { dirname, join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createFileStore } from '../../server/utils/files/storage'
import { sweepOrphans } from '../../server/utils/files/sweep'
import { Client, closeTestDb, makeWorld, signUp, addMember, testDb, testKnex, type World } from '../support/api'
import { BASE_URL } from '../support/env'
import { FILES_DIR, PNG_1x1, byteSource, storedFiles, streamDownload, streamUpload, upload, uploadForm, uploadOk } from '../support/files'
import { addReading, newRevision, newTarget } from '../support/measure'
import { listeningPid, rssOf, watchRss } from '../support/proc'

function formOf(fill: (f: FormData) => void): FormData {
  const f = new FormData()
  fill(f)
  return f
}

// scripts/test.sh starts the server with NUXT_FILES_MAX_BYTES=60000000 and a team quota of 1 GB,
// so the limits can be tested without sending hundreds of megabytes.
const MAX_BYTES = Number(process.env.NUXT_FILES_MAX_BYTES ?? 60_000_000)
const QUOTA = Number(process.env.NUXT_FILES_TEAM_QUOTA_BYTES ?? 1_000_000_000)
const MB = 1_000_000
const sha = (b: Uint8Array | string) => createHash('sha256').update(b).digest('hex')
const KEY = /^[0-9a-f]{2}\/[0-9a-f-]{36}$/

/** The running test server: the process on the app's port (another test may have restarted it). */
function serverPid(): number {
  const pid = listeningPid(Number(new URL(BASE_URL).port)) ?? Number(process.env.RATCHET_TEST_APP_PID)
  if (!pid) throw new Error('the test server’s process was not found')
  return pid
}

/** Rows of the build and bytes on disk, for checking that a refused upload left nothing. */
async function storedState(buildId: string) {
  const row = await testDb()('files').where({ build_id: buildId }).count({ n: '*' }).first()
  return { rows: Number(row?.n), files: storedFiles().length }
}

async function waitFor(check: () => Promise<boolean> | boolean, ms = 5000) {
  const deadline = Date.now() + ms
  while (Date.now() < deadline) {
    if (await check()) return true
    await new Promise(r => setTimeout(r, 100))
  }
  return false
}

/** A multipart body written by hand, to send file names a browser would never send. */
function rawMultipart(filenameHeader: string, content: string) {
  const boundary = `----raw${randomBytes(6).toString('hex')}`
  const body = Buffer.concat([
    Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="file"; ${filenameHeader}\r\nContent-Type: text/plain\r\n\r\n`, 'utf8'),
    Buffer.from(content),
    Buffer.from(`\r\n--${boundary}--\r\n`),
  ])
  return { body, type: `multipart/form-data; boundary=${boundary}` }
}

describe('evidence files', () => {
  let w: World
  const b = () => w.build.slug

  beforeAll(async () => {
    w = await makeWorld()
    // bytes left by earlier runs (their rows went with the reset database)
    await sweepOrphans(testKnex(), createFileStore({ driver: 'fs', dir: FILES_DIR }), { graceMs: 0 })
  })
  afterAll(closeTestDb)

  it('a 50 MB upload and its download are byte-identical, and the server’s memory stays bounded', async () => {
    const pid = serverPid()
    const size = 50 * MB
    const before = rssOf(pid)
    const watch = watchRss(pid)
    const up = await streamUpload(`/api/v1/builds/${b()}/files`, { cookie: w.engineer.client.cookie, name: 'dyno-run-R3.mp4', size, seed: 'fifty' })
    const peakUp = watch.stop()
    expect(up.status, JSON.stringify(up.body)).toBe(201)
    expect(up.body).toMatchObject({ name: 'dyno-run-R3.mp4', size, sha256: up.sha256 })

    const row = await testDb()('files').where({ id: up.body.id }).first()
    expect(row.sha256).toBe(up.sha256)
    expect(Number(row.size)).toBe(size)
    expect(row.storage_key).toMatch(KEY)
    expect(statSync(join(FILES_DIR, row.storage_key)).size).toBe(size)

    const watchDown = watchRss(pid)
    const down = await streamDownload(`/api/v1/files/${up.body.id}`, { cookie: w.reviewer.client.cookie })
    const peakDown = watchDown.stop()
    const after = rssOf(pid)
    expect(down.status).toBe(200)
    expect(down.bytes).toBe(size)
    expect(down.sha256).toBe(up.sha256)
    expect(down.headers.get('etag')).toBe(`"${up.sha256}"`)

    const growth = Math.max(peakUp, peakDown) - before
    console.log(`  50 MB upload ${(size / MB / up.seconds).toFixed(0)} MB/s, download ${(size / MB / down.seconds).toFixed(0)} MB/s; `
      + `server RSS before ${(before / MB).toFixed(0)} MB, peak ${(Math.max(peakUp, peakDown) / MB).toFixed(0)} MB (+${(growth / MB).toFixed(1)} MB), after ${(after / MB).toFixed(0)} MB`)
    // the file is half the bound: holding it whole in memory, even once, would cross it
    expect(growth).toBeLessThan(100 * MB)
  })

  describe('access', () => {
    let fileId: string
    beforeAll(async () => { fileId = (await uploadOk(w.engineer.client, b(), 'bench.png', PNG_1x1)).id })

    it('a file outside the caller’s teams is a 404, like one that doesn’t exist', async () => {
      const outsider = await w.outsider.client.get(`/api/v1/files/${fileId}`)
      const missing = await w.outsider.client.get(`/api/v1/files/${randomUUID()}`)
      expect(outsider.status).toBe(404)
      expect(missing.status).toBe(404)
      expect(outsider.body.message).toBe(missing.body.message)
      expect(outsider.headers.get('content-disposition')).toBeNull()

      const foreignRig = new Client()
      foreignRig.bearer = w.foreignToken
      expect((await foreignRig.get(`/api/v1/files/${fileId}`)).status).toBe(404)
      expect((await new Client().get(`/api/v1/files/${fileId}`)).status).toBe(401)
      expect((await new Client().get(`/api/v1/files/${randomUUID()}`)).status).toBe(401)
      expect((await w.outsider.client.get('/api/v1/files/not-a-uuid')).status).toBe(404)
    })

    it('members and the build’s own rig token read it', async () => {
      const rig = new Client()
      rig.bearer = w.ownToken
      for (const c of [w.reviewer.client, w.engineer.client, w.owner.client, rig]) {
        const res = await c.get(`/api/v1/files/${fileId}`)
        expect(res.status).toBe(200)
        expect(res.headers.get('content-type')).toBe('image/png')
      }
    })

    it('a rig token uploads to its own build only', async () => {
      const rig = new Client()
      rig.bearer = w.ownToken
      const ok = await upload(rig, b(), 'scope-trace.csv', 't,v\n0,1\n')
      expect(ok.status).toBe(201)
      const list = await w.reviewer.client.get(`/api/v1/builds/${b()}/files?q=scope-trace`)
      expect(list.body.items[0].uploadedBy).toBe('rig token bench rig')

      const foreign = new Client()
      foreign.bearer = w.foreignToken
      const before = await storedState(w.build.id)
      expect((await upload(foreign, b(), 'x.txt', 'x')).status).toBe(404)
      expect((await upload(w.reviewer.client, b(), 'x.txt', 'x')).status).toBe(403)
      expect(await storedState(w.build.id)).toEqual(before)
    })
  })

  describe('limits', () => {
    it('over the size limit: 413, and neither a row nor a byte is kept', async () => {
      const before = await storedState(w.build.id)
      const res = await streamUpload(`/api/v1/builds/${b()}/files`, { cookie: w.engineer.client.cookie, name: 'too-big.bin', size: MAX_BYTES + 1 })
      expect(res.status).toBe(413)
      expect(res.body.message).toMatch(/larger than the limit of 60\.0 MB/)
      expect(await storedState(w.build.id)).toEqual(before)
    })

    it('a declared length over the limit is refused before the body is read', async () => {
      const before = await storedState(w.build.id)
      const { type } = rawMultipart('filename="huge.bin"', '')
      const url = new URL(`${BASE_URL}/api/v1/builds/${b()}/files`)
      const status = await new Promise<number>((resolve, reject) => {
        const req = request(url, { method: 'POST', headers: { 'content-type': type, 'content-length': String(10 * 1000 * MB), 'cookie': w.engineer.client.cookie } }, (res) => {
          res.resume()
          resolve(res.statusCode!)
          req.destroy()
        })
        req.on('error', reject)
        req.write(Buffer.alloc(64 * 1024))
      })
      expect(status).toBe(413)
      expect(await storedState(w.build.id)).toEqual(before)
    })

    it('past the team’s quota: 413 naming the quota, nothing kept; under it the upload goes through', async () => {
      const q = await makeWorld()
      // the team has used all but 1,000 bytes of its quota
      await testDb()('files').insert({
        build_id: q.build.id, storage_key: `00/${randomUUID()}`, name: 'earlier footage.mp4', size: QUOTA - 1000,
        content_type: 'video/mp4', kind: 'video', sha256: sha('earlier'), uploaded_by: q.owner.user.id,
      })
      const before = await storedState(q.build.id)
      const refused = await upload(q.engineer.client, q.build.slug, 'photo.jpg', randomBytes(2000))
      expect(refused.status).toBe(413)
      expect(refused.body.message).toMatch(/storage quota is full/)
      expect(await storedState(q.build.id)).toEqual(before)

      expect((await upload(q.engineer.client, q.build.slug, 'note.txt', 'fits in the room left')).status).toBe(201)
      const usage = await q.reviewer.client.get(`/api/teams/${q.team.slug}/storage`)
      expect(usage.status).toBe(200)
      expect(usage.body).toMatchObject({ usedBytes: QUOTA - 1000 + 'fits in the room left'.length, quotaBytes: QUOTA, files: 2, maxFileBytes: MAX_BYTES })
    })

    it('an upload cut off mid-way leaves nothing behind', async () => {
      const before = await storedState(w.build.id)
      const controller = new AbortController()
      const next = byteSource('cut')
      let sent = 0
      let release = () => {}
      const stalled = new Promise<void>(r => (release = r))
      const boundary = 'cutcutcut'
      const body = new ReadableStream<Uint8Array>({
        async pull(c) {
          if (sent === 0) c.enqueue(new TextEncoder().encode(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="cut.bin"\r\n\r\n`))
          if (sent >= 8 * MB) {
            // the body stops flowing here until the test cuts the connection
            await stalled
            return
          }
          const chunk = next(1 << 20)
          sent += chunk.length
          c.enqueue(new Uint8Array(chunk))
        },
      })
      const sending = fetch(`${BASE_URL}/api/v1/builds/${b()}/files`, {
        method: 'POST',
        headers: { 'content-type': `multipart/form-data; boundary=${boundary}`, 'cookie': w.engineer.client.cookie },
        body,
        duplex: 'half',
        signal: controller.signal,
      } as RequestInit).catch(() => null)
      // the server is storing the bytes as they come …
      expect(await waitFor(() => storedFiles().length === before.files + 1)).toBe(true)
      controller.abort()
      release()
      await sending
      // … and removes them when the client goes away
      expect(await waitFor(async () => JSON.stringify(await storedState(w.build.id)) === JSON.stringify(before))).toBe(true)
    })

    it('bad requests are 400s that store nothing', async () => {
      const before = await storedState(w.build.id)
      const cases = [
        // a JSON body on the upload route is the wrong media type: 415
        await w.engineer.client.post(`/api/v1/builds/${b()}/files`, { file: 'not multipart' }),
        await w.engineer.client.post(`/api/v1/builds/${b()}/files`, uploadForm('empty.txt', '')),
        await w.engineer.client.post(`/api/v1/builds/${b()}/files`, formOf(f => f.append('revision', 'R1'))),
        await w.engineer.client.post(`/api/v1/builds/${b()}/files`, formOf(f => f.append('photo', new Blob(['x']), 'x.txt'))),
        await w.engineer.client.post(`/api/v1/builds/${b()}/files`, uploadForm('a.txt', 'x', { reading: 'not-an-id' })),
      ]
      expect(cases.map(r => r.status)).toEqual([415, 400, 400, 400, 400])
      for (const r of cases) expect(typeof r.body.message).toBe('string')
      expect(await storedState(w.build.id)).toEqual(before)
    })
  })

  describe('names and types', () => {
    it.each([
      ['filename="../../etc/passwd"', 'passwd'],
      ['filename="..\\\\x"', 'x'],
      ['filename="/etc/shadow"', 'shadow'],
      ['filename="C:\\\\Users\\\\lab\\\\notes.txt"', 'notes.txt'],
      [`filename*=UTF-8''evil%00.txt`, 'evil.txt'],
      ['filename=".."', 'file'],
      [`filename*=UTF-8''..%2F..%2Fboot%2Fgrub.cfg`, 'grub.cfg'],
    ])('%s is stored under a key of the server’s and shown as %j', async (header, shown) => {
      const content = `traversal probe ${randomBytes(4).toString('hex')}`
      const { body, type } = rawMultipart(header, content)
      const res = await fetch(`${BASE_URL}/api/v1/builds/${b()}/files`, { method: 'POST', headers: { 'content-type': type, 'cookie': w.engineer.client.cookie }, body })
      const json = await res.json() as { id: string, name: string }
      expect(res.status, JSON.stringify(json)).toBe(201)
      expect(json.name).toBe(shown)
      const row = await testDb()('files').where({ id: json.id }).first()
      expect(row.storage_key).toMatch(KEY)
      expect(row.storage_key).not.toContain(shown)
      // the bytes are where the key says, inside the storage folder, and nowhere the name points
      const stored = join(FILES_DIR, row.storage_key)
      expect(dirname(dirname(stored))).toBe(FILES_DIR)
      expect(sha(Buffer.from(content))).toBe(row.sha256)
      expect(existsSync(join(FILES_DIR, '..', '..', 'etc', 'passwd'))).toBe(false)
      expect(existsSync(join(FILES_DIR, '..', 'x'))).toBe(false)
      const down = await w.reviewer.client.get(`/api/v1/files/${json.id}`)
      expect(down.headers.get('content-disposition')).toBe(`inline; filename="${shown}"`)
    })

    it('a raw NUL byte in the part’s header is refused as malformed, nothing stored', async () => {
      const before = await storedState(w.build.id)
      const { body, type } = rawMultipart('filename="evil\u0000.html"', 'x')
      const res = await fetch(`${BASE_URL}/api/v1/builds/${b()}/files`, { method: 'POST', headers: { 'content-type': type, 'cookie': w.engineer.client.cookie }, body })
      expect(res.status).toBe(400)
      expect(await storedState(w.build.id)).toEqual(before)
    })

    it('a name in another script downloads under its own name (RFC 6266 filename*)', async () => {
      const f = await uploadOk(w.engineer.client, b(), 'Prüfstand Lauf 3 °C.csv', 'zeit,moment\n0,41.2\n')
      const res = await w.reviewer.client.get(`/api/v1/files/${f.id}?download=1`)
      expect(res.headers.get('content-disposition')).toBe('attachment; filename="Prufstand Lauf 3 _C.csv"; filename*=UTF-8\'\'Pr%C3%BCfstand%20Lauf%203%20%C2%B0C.csv')
    })

    it.each([
      ['report.html', '<!doctype html><html><body><script>alert(document.cookie)</script></body></html>', 'text/html'],
      ['chart.png', '<html><script>alert(1)</script></html>', 'text/html'],
      ['logo.svg', '<svg xmlns="http://www.w3.org/2000/svg" onload="alert(1)"/>', 'image/svg+xml'],
      ['data.xml', '<?xml version="1.0"?><x/>', 'application/xml'],
      ['notes.txt.html', 'just words', 'text/html'],
    ])('%s is served as an opaque attachment, never inline', async (name, content, sniffed) => {
      const f = await uploadOk(w.engineer.client, b(), name, content)
      expect(f.contentType).toBe(sniffed)
      const res = await w.reviewer.client.get(`/api/v1/files/${f.id}`)
      expect(res.status).toBe(200)
      expect(res.headers.get('content-type')).toBe('application/octet-stream')
      expect(res.headers.get('content-disposition')).toMatch(/^attachment; /)
      expect(res.headers.get('x-content-type-options')).toBe('nosniff')
      expect(res.headers.get('content-security-policy')).toMatch(/sandbox/)
      expect(res.body).toBe(content)
    })

    it('the type comes from the bytes, not from what the client claims', async () => {
      const png = await w.engineer.client.post(`/api/v1/builds/${b()}/files`, uploadForm('photo.html', PNG_1x1, {}, 'text/html'))
      expect(png.body.contentType).toBe('image/png')
      // a PNG named .html is still not served inline as a page
      expect((await w.reviewer.client.get(`/api/v1/files/${png.body.id}`)).headers.get('content-type')).toBe('application/octet-stream')
      const png2 = await uploadOk(w.engineer.client, b(), 'photo.jpg', PNG_1x1)
      expect(png2.contentType).toBe('image/png')
      const res = await w.reviewer.client.get(`/api/v1/files/${png2.id}`)
      expect(res.headers.get('content-type')).toBe('image/png')
      expect(res.headers.get('content-disposition')).toBe('inline; filename="photo.jpg"')
      const csv = await uploadOk(w.engineer.client, b(), 'run.csv', 'a,b\n1,2\n')
      expect(csv.contentType).toBe('text/csv')
      expect((await w.reviewer.client.get(`/api/v1/files/${csv.id}`)).headers.get('content-type')).toBe('text/csv; charset=utf-8')
    })
  })

  describe('ranges and caching', () => {
    const size = 100_000
    const bytes = byteSource('range')(size)
    let id: string
    beforeAll(async () => { id = (await uploadOk(w.engineer.client, b(), 'trace.bin', bytes)).id })

    const get = (headers: Record<string, string>) => fetch(`${BASE_URL}/api/v1/files/${id}`, { headers: { cookie: w.reviewer.client.cookie, ...headers } })

    it.each([
      ['bytes=1000-1999', 1000, 1999],
      ['bytes=0-0', 0, 0],
      ['bytes=-100', size - 100, size - 1],
      ['bytes=99000-', 99000, size - 1],
      ['bytes=99990-200000', 99990, size - 1],
    ])('%s returns exactly those bytes', async (range, start, end) => {
      const res = await get({ range })
      expect(res.status).toBe(206)
      expect(res.headers.get('content-range')).toBe(`bytes ${start}-${end}/${size}`)
      expect(res.headers.get('content-length')).toBe(String(end - start + 1))
      expect(Buffer.from(await res.arrayBuffer()).equals(bytes.subarray(start, end + 1))).toBe(true)
    })

    it('a range past the end is a 416 naming the size', async () => {
      const res = await get({ range: `bytes=${size}-` })
      expect(res.status).toBe(416)
      expect(res.headers.get('content-range')).toBe(`bytes */${size}`)
      expect((await res.json() as { message: string }).message).toMatch(/outside the file/)
    })

    it('If-None-Match with the ETag is a 304; a stale If-Range sends the whole file', async () => {
      const etag = `"${sha(bytes)}"`
      const first = await get({})
      expect(first.headers.get('etag')).toBe(etag)
      expect(first.headers.get('accept-ranges')).toBe('bytes')
      expect(Buffer.from(await first.arrayBuffer()).equals(bytes)).toBe(true)
      const cached = await get({ 'if-none-match': etag })
      expect(cached.status).toBe(304)
      expect((await cached.arrayBuffer()).byteLength).toBe(0)
      expect((await get({ 'if-none-match': '"other"' })).status).toBe(200)
      const stale = await get({ 'range': 'bytes=0-9', 'if-range': '"other"' })
      expect(stale.status).toBe(200)
      expect(stale.headers.get('content-length')).toBe(String(size))
      await stale.arrayBuffer()
      expect((await get({ 'range': 'bytes=0-9', 'if-range': etag })).status).toBe(206)
    })
  })

  describe('attaching, listing and deleting', () => {
    let key: string
    let label: string
    let readingId: string
    beforeAll(async () => {
      key = (await newTarget(w.owner.client, b(), { unit: 'A', comparator: 'atMost', threshold: 30 })).key
      label = (await newRevision(w.owner.client, b(), `A${randomBytes(3).toString('hex')}`)).label
      readingId = (await addReading(w.engineer.client, b(), { revision: label, target: key, values: [28.1, 28.4], unit: 'A' })).reading.id
    })

    it('attaches to a reading (and so its revision), a revision or a finding of the build', async () => {
      const onReading = await uploadOk(w.engineer.client, b(), 'clamp-meter.jpg', PNG_1x1, { reading: readingId })
      const onRevision = await uploadOk(w.engineer.client, b(), 'wiring.png', PNG_1x1, { revision: label.toLowerCase() })
      const finding = await w.engineer.client.post(`/api/v1/builds/${b()}/findings`, { title: 'Battery lead warm at the lug', severity: 'degrades' })
      expect(finding.status).toBe(201)
      const onFinding = await uploadOk(w.engineer.client, b(), 'lug.png', PNG_1x1, { finding: finding.body.id })
      const rows = await testDb()('files').whereIn('id', [onReading.id, onRevision.id, onFinding.id]).select('id', 'revision_id', 'reading_id', 'finding_id')
      const revisionId = (await testDb()('revisions').where({ build_id: w.build.id, label }).first('id')).id
      expect(rows.find(r => r.id === onReading.id)).toMatchObject({ reading_id: readingId, revision_id: revisionId, finding_id: null })
      expect(rows.find(r => r.id === onRevision.id)).toMatchObject({ reading_id: null, revision_id: revisionId, finding_id: null })
      expect(rows.find(r => r.id === onFinding.id)).toMatchObject({ reading_id: null, revision_id: null, finding_id: finding.body.id })

      const byRevision = await w.reviewer.client.get(`/api/v1/builds/${b()}/files?revision=${label}`)
      expect(byRevision.body.items.map((f: any) => f.id).sort()).toEqual([onReading.id, onRevision.id].sort())
      const byTarget = await w.reviewer.client.get(`/api/v1/builds/${b()}/files?target=${key}`)
      expect(byTarget.body.items.map((f: any) => f.id)).toEqual([onReading.id])
      expect(byTarget.body.items[0].reading).toEqual({ id: readingId, target: key, targetName: 'Test target', revision: label })
      const byFinding = await w.reviewer.client.get(`/api/v1/builds/${b()}/files?finding=${finding.body.id}`)
      expect(byFinding.body.items.map((f: any) => f.finding)).toEqual([{ id: finding.body.id, title: 'Battery lead warm at the lug' }])
    })

    it('a wrong attachment is refused before a byte is stored', async () => {
      const other = await makeWorld()
      const otherKey = (await newTarget(other.owner.client, other.build.slug)).key
      const otherLabel = (await newRevision(other.owner.client, other.build.slug, 'R1')).label
      const otherReading = (await addReading(other.owner.client, other.build.slug, { revision: otherLabel, target: otherKey, values: [11], unit: 'N' })).reading.id
      const before = await storedState(w.build.id)
      const cases = [
        [await upload(w.engineer.client, b(), 'a.png', PNG_1x1, { revision: 'R404' }), 404, /Revision "R404" not found/],
        [await upload(w.engineer.client, b(), 'a.png', PNG_1x1, { reading: otherReading }), 404, /no such reading in this build/],
        [await upload(w.engineer.client, b(), 'a.png', PNG_1x1, { finding: randomUUID() }), 404, /no such finding/],
        [await upload(w.engineer.client, b(), 'a.png', PNG_1x1, { reading: readingId, revision: 'R404' }), 422, /that reading is on revision/],
      ] as const
      for (const [res, status, message] of cases) {
        expect(res.status, JSON.stringify(res.body)).toBe(status)
        expect(res.body.message).toMatch(message)
      }
      expect(await storedState(w.build.id)).toEqual(before)
    })

    it('fields sent after the file are checked too, and the stored bytes removed when they are wrong', async () => {
      const before = await storedState(w.build.id)
      const form = new FormData()
      form.append('file', new Blob([PNG_1x1]), 'late.png')
      form.append('revision', 'R404')
      const res = await w.engineer.client.post(`/api/v1/builds/${b()}/files`, form)
      expect(res.status).toBe(404)
      expect(await storedState(w.build.id)).toEqual(before)
    })

    it('lists newest first, by kind, by name, a page at a time', async () => {
      const q = await makeWorld()
      for (const [name, content] of [['a.png', PNG_1x1], ['b.csv', 'x,y\n1,2\n'], ['c.png', PNG_1x1], ['d.txt', 'log']] as const) {
        await uploadOk(q.engineer.client, q.build.slug, name, content)
      }
      const all = await q.reviewer.client.get(`/api/v1/builds/${q.build.slug}/files`)
      expect(all.body.items.map((f: any) => f.name)).toEqual(['d.txt', 'c.png', 'b.csv', 'a.png'])
      expect(all.body.total).toBe(4)
      expect(all.body.items[0]).toMatchObject({ kind: 'text', inline: true, url: `/api/v1/files/${all.body.items[0].id}`, uploadedBy: 'Eno Engineer', canDelete: false })
      const images = await q.reviewer.client.get(`/api/v1/builds/${q.build.slug}/files?kind=image`)
      expect(images.body.items.map((f: any) => f.name)).toEqual(['c.png', 'a.png'])
      const page2 = await q.reviewer.client.get(`/api/v1/builds/${q.build.slug}/files?perPage=3&page=2`)
      expect(page2.body).toMatchObject({ total: 4, page: 2, perPage: 3 })
      expect(page2.body.items.map((f: any) => f.name)).toEqual(['a.png'])
      expect((await q.reviewer.client.get(`/api/v1/builds/${q.build.slug}/files?q=b.cs`)).body.items.map((f: any) => f.name)).toEqual(['b.csv'])
      expect((await q.reviewer.client.get(`/api/v1/builds/${q.build.slug}/files?kind=sculpture`)).status).toBe(400)
      // one file by its id (the measuring screen opens a video so); another build's id lists nothing
      const one = await q.reviewer.client.get(`/api/v1/builds/${q.build.slug}/files?id=${all.body.items[2].id}`)
      expect(one.body).toMatchObject({ total: 1, items: [{ name: 'b.csv' }] })
      expect((await w.reviewer.client.get(`/api/v1/builds/${w.build.slug}/files?id=${all.body.items[2].id}`)).body.total).toBe(0)
      expect((await q.reviewer.client.get(`/api/v1/builds/${q.build.slug}/files?id=b.csv`)).status).toBe(400)
      expect((await q.reviewer.client.get(`/api/v1/builds/${q.build.slug}/files?perPage=500`)).status).toBe(400)
      expect((await q.engineer.client.get(`/api/v1/builds/${q.build.slug}/files`)).body.items.every((f: any) => f.canDelete)).toBe(true)
    })

    it('the uploader or an Owner deletes a file: the row and the bytes go together', async () => {
      const second = await signUp({ name: 'Second Engineer' })
      await addMember(w.team.id, second.user.id, 'engineer')
      const f = await uploadOk(w.engineer.client, b(), 'to-delete.txt', 'short-lived')
      const row = await testDb()('files').where({ id: f.id }).first()
      const path = join(FILES_DIR, row.storage_key)
      expect(existsSync(path)).toBe(true)
      expect((await second.client.delete(`/api/v1/files/${f.id}`)).status).toBe(403)
      expect((await w.reviewer.client.delete(`/api/v1/files/${f.id}`)).status).toBe(403)
      expect((await w.outsider.client.delete(`/api/v1/files/${f.id}`)).status).toBe(404)
      expect(existsSync(path)).toBe(true)
      expect((await w.engineer.client.delete(`/api/v1/files/${f.id}`)).status).toBe(204)
      expect(await testDb()('files').where({ id: f.id }).first()).toBeUndefined()
      expect(existsSync(path)).toBe(false)
      expect((await w.engineer.client.get(`/api/v1/files/${f.id}`)).status).toBe(404)

      const g = await uploadOk(w.engineer.client, b(), 'owner-deletes.txt', 'x')
      expect((await w.owner.client.delete(`/api/v1/files/${g.id}`)).status).toBe(204)
      const audit = await testDb()('audit_log').where({ action: 'file.deleted', team_id: w.team.id }).orderBy('id', 'desc').first()
      expect(audit.detail).toMatchObject({ file: g.id, name: 'owner-deletes.txt' })
    })

    it('evidence of a signed-off revision is removed only by an Owner', async () => {
      const r = await newRevision(w.owner.client, b(), `S${randomBytes(3).toString('hex')}`)
      const f = await uploadOk(w.engineer.client, b(), 'sign-off-photo.png', PNG_1x1, { revision: r.label })
      expect((await w.reviewer.client.post(`/api/v1/builds/${b()}/revisions/${r.label}/freeze`)).status).toBe(200)
      const refused = await w.engineer.client.delete(`/api/v1/files/${f.id}`)
      expect(refused.status).toBe(403)
      expect(refused.body.message).toMatch(/signed off/)
      expect((await w.owner.client.delete(`/api/v1/files/${f.id}`)).status).toBe(204)
    })
  })

  it('the sweep removes stored bytes without a row once they are older than the grace period', async () => {
    const store = createFileStore({ driver: 'fs', dir: FILES_DIR })
    const old = new Date(Date.now() - 3 * 3600_000)
    const orphan = (age: Date | null) => {
      const id = randomUUID()
      const key = `${id.slice(0, 2)}/${id}`
      mkdirSync(join(FILES_DIR, id.slice(0, 2)), { recursive: true })
      writeFileSync(join(FILES_DIR, key), 'left by a crash')
      if (age) utimesSync(join(FILES_DIR, key), age, age)
      return key
    }
    const oldOrphan = orphan(old)
    const youngOrphan = orphan(null)
    const kept = await uploadOk(w.engineer.client, b(), 'kept.txt', 'has a row')
    const keptKey = (await testDb()('files').where({ id: kept.id }).first()).storage_key
    utimesSync(join(FILES_DIR, keptKey), old, old)

    const dry = await sweepOrphans(testKnex(), store, { graceMs: 3600_000, dryRun: true })
    expect(dry.removed).toContain(oldOrphan)
    expect(existsSync(join(FILES_DIR, oldOrphan))).toBe(true)

    const result = await sweepOrphans(testKnex(), store, { graceMs: 3600_000 })
    expect(result.removed).toEqual([oldOrphan])
    expect(existsSync(join(FILES_DIR, oldOrphan))).toBe(false)
    expect(existsSync(join(FILES_DIR, youngOrphan))).toBe(true)
    expect(existsSync(join(FILES_DIR, keptKey))).toBe(true)
    await store.remove(youngOrphan)
  })
})
