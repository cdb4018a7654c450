import { createHash } from 'node:crypto'
import { createServer, type IncomingMessage, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { Readable } from 'node:stream'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { S3Store } from '../../server/utils/files/s3'
import { createFileStore } from '../../server/utils/files/storage'

// The S3 store (the AWS SDK's client and lib-storage's Upload) against a small in-process
// stand-in for an S3-compatible service: it keeps objects and multipart uploads in memory, answers
// the XML S3 answers, and refuses a request whose payload hash doesn't match its body (as S3
// does). A stand-in rather than s3rver, to play a server that ignores Range (s3rver and its gate
// run in tests/api/filesS3.test.ts).

interface Upload { key: string, parts: Map<number, Buffer> }

function fakeS3() {
  const objects = new Map<string, { body: Buffer, modified: Date }>()
  const uploads = new Map<string, Upload>()
  // the query's names but the SDK's x-id (the operation's name), and the part number
  const log: { method: string, path: string, query: string, part: string | null, bytes: number }[] = []
  let nextUpload = 1
  const read = (req: IncomingMessage) => new Promise<Buffer>((resolve) => {
    const chunks: Buffer[] = []
    req.on('data', (c: Buffer) => chunks.push(c)).on('end', () => resolve(Buffer.concat(chunks)))
  })
  const server = createServer(async (req, res) => {
    const url = new URL(req.url!, 'http://x')
    const body = await read(req)
    const names = [...url.searchParams.keys()].filter(k => k !== 'x-id').sort().join('&')
    log.push({ method: req.method!, path: url.pathname, query: names, part: url.searchParams.get('partNumber'), bytes: body.length })
    const declared = req.headers['x-amz-content-sha256']
    if (!req.headers.authorization?.startsWith('AWS4-HMAC-SHA256 Credential=KEY/') || declared !== createHash('sha256').update(body).digest('hex')) {
      res.writeHead(403).end('<Error><Code>SignatureDoesNotMatch</Code></Error>')
      return
    }
    const key = decodeURIComponent(url.pathname.replace(/^\/bucket\/?/, ''))
    const q = url.searchParams
    if (req.method === 'POST' && q.has('uploads')) {
      const id = `u${nextUpload++}`
      uploads.set(id, { key, parts: new Map() })
      res.end(`<?xml version="1.0"?><InitiateMultipartUploadResult><UploadId>${id}</UploadId></InitiateMultipartUploadResult>`)
    }
    else if (req.method === 'PUT' && q.has('uploadId')) {
      uploads.get(q.get('uploadId')!)!.parts.set(Number(q.get('partNumber')), body)
      res.writeHead(200, { etag: `"p${q.get('partNumber')}"` }).end()
    }
    else if (req.method === 'POST' && q.has('uploadId')) {
      const up = uploads.get(q.get('uploadId')!)!
      // each <Part> names its number and the ETag its PUT answered ("p<number>")
      const numbers = [...body.toString().matchAll(/<Part>([\s\S]*?)<\/Part>/g)].map((m) => {
        const n = /<PartNumber>(\d+)<\/PartNumber>/.exec(m[1]!)![1]!
        if (!m[1]!.includes(`<ETag>&quot;p${n}&quot;</ETag>`) && !m[1]!.includes(`<ETag>"p${n}"</ETag>`)) throw new Error(`part ${n} without its ETag`)
        return Number(n)
      })
      objects.set(up.key, { body: Buffer.concat(numbers.map(n => up.parts.get(n)!)), modified: new Date('2026-01-01T00:00:00Z') })
      uploads.delete(q.get('uploadId')!)
      res.end('<CompleteMultipartUploadResult/>')
    }
    else if (req.method === 'DELETE' && q.has('uploadId')) {
      uploads.delete(q.get('uploadId')!)
      res.writeHead(204).end()
    }
    else if (req.method === 'PUT') {
      objects.set(key, { body, modified: new Date() })
      res.end()
    }
    else if (req.method === 'GET' && q.get('list-type') === '2') {
      const keys = [...objects.keys()].sort()
      const start = Number(q.get('continuation-token') ?? 0)
      const page = keys.slice(start, start + 2)
      const more = start + 2 < keys.length
      res.end(`<?xml version="1.0"?><ListBucketResult>${page.map(k => `<Contents><Key>${k}</Key><LastModified>${objects.get(k)!.modified.toISOString()}</LastModified></Contents>`).join('')}`
        + `<IsTruncated>${more}</IsTruncated>${more ? `<NextContinuationToken>${start + 2}</NextContinuationToken>` : ''}</ListBucketResult>`)
    }
    else if (req.method === 'GET') {
      const obj = objects.get(key)
      if (!obj) {
        res.writeHead(404).end()
        return
      }
      const m = /bytes=(\d+)-(\d+)/.exec(req.headers.range ?? '')
      // a server (or a proxy on the way) that ignores Range for this one key
      if (m && key !== 'ab/ranges-ignored') res.writeHead(206).end(obj.body.subarray(Number(m[1]), Number(m[2]) + 1))
      else res.end(obj.body)
    }
    else if (req.method === 'DELETE') {
      objects.delete(key)
      res.writeHead(204).end()
    }
    else res.writeHead(400).end()
  })
  return { server, objects, uploads, log }
}

const text = async (r: Readable) => {
  const chunks: Buffer[] = []
  for await (const c of r) chunks.push(c as Buffer)
  return Buffer.concat(chunks)
}

describe('S3Store', () => {
  const fake = fakeS3()
  let store: S3Store
  beforeAll(async () => {
    await new Promise<void>(r => fake.server.listen(0, '127.0.0.1', r))
    const port = (fake.server as Server).address() as AddressInfo
    store = new S3Store({ endpoint: `http://127.0.0.1:${port.port}`, bucket: 'bucket', region: 'us-east-1', accessKeyId: 'KEY', secretAccessKey: 'SECRET' })
  })
  afterAll(() => new Promise<void>(r => fake.server.close(() => r())))

  it('sends a large stream as a multipart upload of 8 MiB parts and reads back any range', async () => {
    const size = 20 * 1024 * 1024 + 123
    const data = Buffer.alloc(size)
    for (let i = 0; i < size; i += 4096) data.writeUInt32BE(i, i)
    fake.log.length = 0
    await store.put('ab/big', Readable.from((function* () {
      for (let i = 0; i < size; i += 65536) yield data.subarray(i, i + 65536)
    })()))
    expect(fake.log.map(l => `${l.method} ${l.query} ${l.part} ${l.bytes}`)).toEqual([
      'POST uploads null 0',
      `PUT partNumber&uploadId 1 ${8 * 1024 * 1024}`,
      `PUT partNumber&uploadId 2 ${8 * 1024 * 1024}`,
      `PUT partNumber&uploadId 3 ${size - 16 * 1024 * 1024}`,
      expect.stringMatching(/^POST uploadId null \d+$/),
    ])
    expect(fake.objects.get('ab/big')!.body.equals(data)).toBe(true)
    expect((await text(await store.get('ab/big', { start: 8 * 1024 * 1024 - 2, end: 8 * 1024 * 1024 + 5 }))).equals(data.subarray(8 * 1024 * 1024 - 2, 8 * 1024 * 1024 + 6))).toBe(true)
  })

  it('sends a small stream in one PUT, lists across pages and deletes', async () => {
    fake.log.length = 0
    await store.put('cd/small', Readable.from([Buffer.from('tiny')]))
    expect(fake.log.map(l => `${l.method} ${l.path} ${l.query} ${l.bytes}`)).toEqual(['PUT /bucket/cd/small  4'])
    await store.put('ef/other', Readable.from([Buffer.from('x')]))
    expect((await text(await store.get('cd/small'))).toString()).toBe('tiny')
    const keys: string[] = []
    for await (const o of store.list()) keys.push(o.key)
    expect(keys).toEqual(['ab/big', 'cd/small', 'ef/other'])
    await store.remove('cd/small')
    await store.remove('cd/small')
    expect(fake.objects.has('cd/small')).toBe(false)
    await expect(store.get('cd/small')).rejects.toThrow(/404/)
  })

  it('refuses a whole object sent back for a ranged GET, rather than pass it off as the range', async () => {
    await store.put('ab/ranges-ignored', Readable.from([Buffer.from('0123456789')]))
    expect((await text(await store.get('ab/ranges-ignored'))).toString()).toBe('0123456789')
    await expect(store.get('ab/ranges-ignored', { start: 2, end: 4 })).rejects.toThrow(/ 200/)
    await store.remove('ab/ranges-ignored')
  })

  it('the file store lists only keys of its own shape: other objects in the bucket are not its orphans', async () => {
    const port = ((fake.server as Server).address() as AddressInfo).port
    const files = createFileStore({ driver: 's3', dir: '', s3: { endpoint: `http://127.0.0.1:${port}`, bucket: 'bucket', region: 'us-east-1', accessKeyId: 'KEY', secretAccessKey: 'SECRET' } })
    const own = '3f/3f2504e0-4f89-11d3-9a0c-0305e82c3301'
    await store.put(own, Readable.from([Buffer.from('evidence')]))
    await store.put('backups/2026-01-01.sql', Readable.from([Buffer.from('someone else’s')]))
    const listed: string[] = []
    for await (const o of files.list()) listed.push(o.key)
    expect(listed).toContain(own)
    expect(listed.every(k => /^[0-9a-f]{2}\/[0-9a-f-]{36}$/.test(k))).toBe(true)
    expect(fake.objects.has('backups/2026-01-01.sql')).toBe(true)
    await store.remove(own)
    await store.remove('backups/2026-01-01.sql')
  })

  it('gives up a multipart upload whose stream fails, leaving no upload open', async () => {
    const failing = Readable.from((async function* () {
      yield Buffer.alloc(9 * 1024 * 1024)
      throw new Error('the client went away')
    })())
    fake.log.length = 0
    await expect(store.put('ab/broken', failing)).rejects.toThrow(/went away/)
    expect(fake.log.map(l => `${l.method} ${l.query} ${l.part}`)).toEqual(['POST uploads null', 'PUT partNumber&uploadId 1', 'DELETE uploadId null'])
    expect(fake.uploads.size).toBe(0)
    expect(fake.objects.has('ab/broken')).toBe(false)
  })
})
