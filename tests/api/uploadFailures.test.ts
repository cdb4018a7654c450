import { randomBytes } from 'node:crypto'
import { connect } from 'node:net'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { BASE_URL } from '../support/env'
import { storedFiles, uploadOk } from '../support/files'

// Broken multipart bodies on the upload route, sent byte for byte over a raw socket that stays
// open (a client that waits for its answer): each gets a 4xx within seconds, and leaves no row
// and no stored bytes.

const ANSWER_WITHIN_MS = 3000

interface RawAnswer { status: number, ms: number, body: string }

/**
 * Sends a request with the given body over a fresh connection and waits for the status line and
 * body (or `timeoutMs`: status 0). The connection is not ended from this side.
 */
function rawPost(path: string, headers: Record<string, string>, body: Buffer, timeoutMs = 10_000): Promise<RawAnswer> {
  const url = new URL(BASE_URL)
  return new Promise((resolve) => {
    const started = performance.now()
    const socket = connect(Number(url.port), url.hostname)
    let got = Buffer.alloc(0)
    const finish = (status: number) => {
      clearTimeout(timer)
      socket.destroy()
      const text = got.toString('utf8')
      resolve({ status, ms: performance.now() - started, body: text.slice(text.indexOf('\r\n\r\n') + 4) })
    }
    const timer = setTimeout(() => finish(0), timeoutMs)
    socket.on('error', () => finish(Number(/^HTTP\/1\.1 (\d{3})/.exec(got.toString('latin1'))?.[1] ?? 0)))
    socket.on('data', (chunk: Buffer) => {
      got = Buffer.concat([got, chunk])
      const text = got.toString('latin1')
      const head = text.indexOf('\r\n\r\n')
      if (head < 0) return
      const status = Number(/^HTTP\/1\.1 (\d{3})/.exec(text)?.[1] ?? 0)
      const length = /\r\ncontent-length: (\d+)/i.exec(text.slice(0, head))?.[1]
      if (length === undefined || got.length - head - 4 >= Number(length)) finish(status)
    })
    socket.on('end', () => finish(Number(/^HTTP\/1\.1 (\d{3})/.exec(got.toString('latin1'))?.[1] ?? 0)))
    const head = [`POST ${path} HTTP/1.1`, `Host: ${url.host}`, 'Connection: keep-alive', `Content-Length: ${body.length}`,
      ...Object.entries(headers).map(([k, v]) => `${k}: ${v}`), '', ''].join('\r\n')
    socket.write(head)
    socket.write(body)
  })
}

/** Builds a multipart body from parts; `close: false` leaves out the closing boundary. */
function multipart(parts: { name: string, filename?: string, content: string | Buffer }[], close = true) {
  const boundary = `----broken${randomBytes(6).toString('hex')}`
  const chunks: Buffer[] = []
  for (const p of parts) {
    const disposition = `form-data; name="${p.name}"${p.filename ? `; filename="${p.filename}"` : ''}`
    const type = p.filename ? 'Content-Type: application/octet-stream\r\n' : ''
    chunks.push(Buffer.from(`--${boundary}\r\nContent-Disposition: ${disposition}\r\n${type}\r\n`), Buffer.from(p.content), Buffer.from('\r\n'))
  }
  if (close) chunks.push(Buffer.from(`--${boundary}--\r\n`))
  return { body: Buffer.concat(chunks), type: `multipart/form-data; boundary=${boundary}` }
}

const fileBytes = (n: number) => randomBytes(n)

describe('broken uploads answer at once and leave nothing behind', () => {
  let w: World

  beforeAll(async () => {
    w = await makeWorld()
    // the route works with a well-formed body (so the refusals below are about the body)
    await uploadOk(w.engineer.client, w.build.slug, 'baseline.bin', fileBytes(2048))
  })
  afterAll(closeTestDb)

  const cases: { what: string, status: number[], make: () => { body: Buffer, type: string } }[] = [
    {
      what: 'two parts named "file"',
      status: [400],
      make: () => multipart([{ name: 'file', filename: 'a.bin', content: fileBytes(50_000) }, { name: 'file', filename: 'b.bin', content: fileBytes(50_000) }]),
    },
    {
      what: 'a body without its closing boundary',
      status: [400],
      make: () => multipart([{ name: 'file', filename: 'cut.bin', content: fileBytes(50_000) }], false),
    },
    {
      what: 'a too-long field after the file',
      status: [400],
      make: () => multipart([{ name: 'file', filename: 'then-long.bin', content: fileBytes(50_000) }, { name: 'revision', content: 'R'.repeat(5000) }]),
    },
    {
      what: 'a too-long field before the file',
      status: [400],
      make: () => multipart([{ name: 'revision', content: 'R'.repeat(5000) }, { name: 'file', filename: 'after-long.bin', content: fileBytes(50_000) }]),
    },
    {
      what: 'nine fields before the file',
      status: [400],
      make: () => multipart([...Array.from({ length: 9 }, (_, i) => ({ name: `extra${i}`, content: 'x' })), { name: 'file', filename: 'nine.bin', content: fileBytes(50_000) }]),
    },
    {
      what: 'nine fields after the file',
      status: [400],
      make: () => multipart([{ name: 'file', filename: 'nine-after.bin', content: fileBytes(50_000) }, ...Array.from({ length: 9 }, (_, i) => ({ name: `extra${i}`, content: 'x' }))]),
    },
    {
      what: 'a part with another name after the file',
      status: [400],
      make: () => multipart([{ name: 'file', filename: 'other.bin', content: fileBytes(50_000) }, { name: 'attachment', filename: 'x.bin', content: fileBytes(1000) }]),
    },
    {
      what: 'a revision after the file that is not in the build',
      status: [404],
      make: () => multipart([{ name: 'file', filename: 'no-rev.bin', content: fileBytes(50_000) }, { name: 'revision', content: 'R-does-not-exist' }]),
    },
  ]

  for (const c of cases) {
    it(`${c.what}: ${c.status.join('/')} within ${ANSWER_WITHIN_MS} ms, no row, no bytes`, async () => {
      const rowsBefore = Number((await testDb()('files').where({ build_id: w.build.id }).count({ n: '*' }).first())!.n)
      const filesBefore = new Set(storedFiles())
      const { body, type } = c.make()
      const answer = await rawPost(`/api/v1/builds/${w.build.slug}/files`, { 'Content-Type': type, 'Cookie': w.engineer.client.cookie }, body)
      expect(answer.status, `answered ${answer.status} after ${answer.ms.toFixed(0)} ms: ${answer.body.slice(0, 200)}`).toBeOneOf(c.status)
      expect(answer.ms).toBeLessThan(ANSWER_WITHIN_MS)
      expect(JSON.parse(answer.body).message).toBeTruthy()
      // removal happens before the answer: nothing to wait for
      const rowsAfter = Number((await testDb()('files').where({ build_id: w.build.id }).count({ n: '*' }).first())!.n)
      expect(rowsAfter).toBe(rowsBefore)
      expect(storedFiles().filter(f => !filesBefore.has(f))).toEqual([])
    })
  }

  it('a client that goes away mid-file leaves no row and no bytes', async () => {
    const rowsBefore = Number((await testDb()('files').where({ build_id: w.build.id }).count({ n: '*' }).first())!.n)
    const filesBefore = new Set(storedFiles())
    const url = new URL(BASE_URL)
    const { body, type } = multipart([{ name: 'file', filename: 'gone.bin', content: fileBytes(400_000) }])
    await new Promise<void>((resolve) => {
      const socket = connect(Number(url.port), url.hostname, () => {
        socket.write([`POST /api/v1/builds/${w.build.slug}/files HTTP/1.1`, `Host: ${url.host}`, `Content-Length: ${body.length}`, `Content-Type: ${type}`, `Cookie: ${w.engineer.client.cookie}`, '', ''].join('\r\n'))
        socket.write(body.subarray(0, 200_000))
        setTimeout(() => {
          socket.destroy()
          resolve()
        }, 500)
      })
      socket.on('error', () => {})
    })
    // the server notices the closed connection and removes what it wrote
    const deadline = Date.now() + ANSWER_WITHIN_MS
    let left = storedFiles().filter(f => !filesBefore.has(f))
    while (left.length && Date.now() < deadline) {
      await new Promise(r => setTimeout(r, 100))
      left = storedFiles().filter(f => !filesBefore.has(f))
    }
    expect(left).toEqual([])
    const rowsAfter = Number((await testDb()('files').where({ build_id: w.build.id }).count({ n: '*' }).first())!.n)
    expect(rowsAfter).toBe(rowsBefore)
  })
})
