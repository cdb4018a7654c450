// The `files` section of `npm run bench` (registered in scripts/bench.ts): upload and download
// throughput of a 200 MB file on loopback against a plain file copy on the same disk, the
// server's peak RSS meanwhile, and the time to import a CSV of 100,000 rows.
import { createHash, randomBytes } from 'node:crypto'
import { createReadStream, createWriteStream } from 'node:fs'
import { execFile } from 'node:child_process'
import { copyFile, mkdir, rm } from 'node:fs/promises'
import { request } from 'node:http'
import { performance } from 'node:perf_hooks'
import { pipeline } from 'node:stream/promises'
import { byteSource } from '../tests/support/files'
import { listeningPid, rssOf, watchRss } from '../tests/support/proc'

const BASE_URL = process.env.RATCHET_BENCH_BASE_URL ?? 'http://127.0.0.1:3200'
const MB = 1_000_000
const SIZE = 200 * MB
const CSV_ROWS = 100_000
const SCRATCH = new URL('../.data/bench/', import.meta.url).pathname
const RUNS = 5

interface Ctx { cookie: string, teamSlug: string }

async function call(ctx: Ctx, method: string, path: string, body?: unknown) {
  const res = await fetch(`${BASE_URL}${path}`, {
    method,
    headers: { cookie: ctx.cookie, ...(body instanceof FormData || body === undefined ? {} : { 'content-type': 'application/json' }) },
    body: body instanceof FormData ? body : body === undefined ? undefined : JSON.stringify(body),
  })
  const text = await res.text()
  if (res.status >= 400) throw new Error(`${method} ${path}: ${res.status} ${text.slice(0, 300)}`)
  return text ? JSON.parse(text) : null
}

const SOURCE = `${SCRATCH}bench-source.bin`
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!

/** The 200 MB file the upload sends and the copy copies; returns its sha256. */
async function writeSource(): Promise<string> {
  await mkdir(SCRATCH, { recursive: true })
  const next = byteSource('bench file')
  const hash = createHash('sha256')
  const out = createWriteStream(SOURCE)
  for (let left = SIZE; left > 0; left -= 1 << 20) {
    const chunk = next(Math.min(1 << 20, left))
    hash.update(chunk)
    if (!out.write(chunk)) await new Promise(r => out.once('drain', r))
  }
  await new Promise<void>((resolve, reject) => out.end((err?: Error | null) => (err ? reject(err) : resolve())))
  return hash.digest('hex')
}

/** Copies the file on the same disk: through streams, and by the kernel. */
async function plainCopy() {
  try {
    let started = performance.now()
    await pipeline(createReadStream(SOURCE), createWriteStream(`${SCRATCH}copy-streamed.bin`))
    const streamed = (performance.now() - started) / 1000
    started = performance.now()
    await copyFile(SOURCE, `${SCRATCH}copy-kernel.bin`)
    const kernel = (performance.now() - started) / 1000
    return { streamed, kernel }
  }
  finally {
    await Promise.all(['copy-streamed.bin', 'copy-kernel.bin'].map(f => rm(`${SCRATCH}${f}`, { force: true })))
  }
}

/** Uploads the source file as multipart over plain node:http (the client adds as little as it can). */
function upload(ctx: Ctx, build: string): Promise<{ id: string, sha256: string, seconds: number }> {
  const boundary = `----bench${randomBytes(8).toString('hex')}`
  const head = Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="bench-200MB.bin"\r\nContent-Type: application/octet-stream\r\n\r\n`)
  const tail = Buffer.from(`\r\n--${boundary}--\r\n`)
  const started = performance.now()
  return new Promise((resolve, reject) => {
    const req = request(`${BASE_URL}/api/v1/builds/${build}/files`, {
      method: 'POST',
      headers: { 'cookie': ctx.cookie, 'content-type': `multipart/form-data; boundary=${boundary}`, 'content-length': head.length + SIZE + tail.length },
    }, (res) => {
      let text = ''
      res.setEncoding('utf8').on('data', (d: string) => (text += d)).on('end', () => {
        if (res.statusCode !== 201) reject(new Error(`upload: ${res.statusCode} ${text} (the server's files.maxBytes must allow 200 MB)`))
        else resolve({ ...JSON.parse(text), seconds: (performance.now() - started) / 1000 })
      })
    })
    req.on('error', reject)
    req.write(head)
    const file = createReadStream(SOURCE, { highWaterMark: 1 << 20 })
    file.on('error', reject)
    file.pipe(req, { end: false })
    file.on('end', () => req.end(tail))
  })
}

/** The same upload and download by curl, a client that adds little of its own; null without curl. */
async function curlRoundTrip(ctx: Ctx, build: string): Promise<{ id: string, sha256: string, up: number, down: number } | null> {
  const run = (args: string[]) => new Promise<string | null>((resolve, reject) => {
    execFile('curl', ['-sS', '--fail-with-body', '-H', `cookie: ${ctx.cookie}`, ...args], { maxBuffer: 1 << 20 }, (err, out) => {
      if ((err as NodeJS.ErrnoException | null)?.code === 'ENOENT') resolve(null)
      else if (err) reject(new Error(`curl: ${err.message} ${out}`))
      else resolve(out)
    })
  })
  let started = performance.now()
  const uploaded = await run(['-F', `file=@${SOURCE};filename=bench-200MB.bin;type=application/octet-stream`, `${BASE_URL}/api/v1/builds/${build}/files`])
  if (uploaded === null) return null
  const up = (performance.now() - started) / 1000
  const { id, sha256 } = JSON.parse(uploaded) as { id: string, sha256: string }
  started = performance.now()
  await run(['-o', `${SCRATCH}curl-download.bin`, `${BASE_URL}/api/v1/files/${id}`])
  const down = (performance.now() - started) / 1000
  await rm(`${SCRATCH}curl-download.bin`, { force: true })
  return { id, sha256, up, down }
}

/** Downloads a file, hashing it on the way. */
function download(ctx: Ctx, id: string): Promise<{ bytes: number, sha256: string, seconds: number }> {
  const started = performance.now()
  return new Promise((resolve, reject) => {
    request(`${BASE_URL}/api/v1/files/${id}`, { headers: { cookie: ctx.cookie } }, (res) => {
      const hash = createHash('sha256')
      let bytes = 0
      res.on('data', (chunk: Buffer) => {
        hash.update(chunk)
        bytes += chunk.length
      })
      res.on('end', () => resolve({ bytes, sha256: hash.digest('hex'), seconds: (performance.now() - started) / 1000 }))
      res.on('error', reject)
    }).on('error', reject).end()
  })
}

function csvOf(labels: string[]): string {
  const lines = ['sample,rev,torque_nm']
  const perRevision = CSV_ROWS / labels.length
  let n = 0
  for (const label of labels) {
    for (let i = 0; i < perRevision; i++) lines.push(`${++n},${label},${(41 + Math.sin(n) * 0.8).toFixed(3)}`)
  }
  return `${lines.join('\n')}\n`
}

export const filesSection = {
  name: 'files',
  async run(ctx: Ctx) {
    const pid = listeningPid(Number(new URL(BASE_URL).port)) ?? Number(process.env.RATCHET_BENCH_APP_PID)
    if (!pid) throw new Error('the server’s process was not found (set RATCHET_BENCH_APP_PID)')
    const build = await call(ctx, 'POST', '/api/v1/builds', { team: ctx.teamSlug, name: `Bench files ${randomBytes(3).toString('hex')}` }) as { slug: string }

    const sha256 = await writeSource()
    const copies: { streamed: number, kernel: number }[] = []
    const ups: number[] = []
    const downs: number[] = []
    const curlUps: number[] = []
    const curlDowns: number[] = []
    const before = rssOf(pid)
    let peakUp = before
    let peakDown = before
    try {
      for (let run = 0; run < RUNS; run++) {
        copies.push(await plainCopy())
        let watch = watchRss(pid)
        const up = await upload(ctx, build.slug)
        peakUp = Math.max(peakUp, watch.stop())
        if (up.sha256 !== sha256) throw new Error('upload: the server’s sha256 differs from the file’s')
        watch = watchRss(pid)
        const down = await download(ctx, up.id)
        peakDown = Math.max(peakDown, watch.stop())
        if (down.sha256 !== sha256 || down.bytes !== SIZE) throw new Error('download: the bytes differ from the upload')
        await call(ctx, 'DELETE', `/api/v1/files/${up.id}`)
        ups.push(up.seconds)
        downs.push(down.seconds)
        // a copy just before each upload: the disk's speed drifts as the page cache fills
        copies.push(await plainCopy())
        const byCurl = await curlRoundTrip(ctx, build.slug)
        if (byCurl) {
          if (byCurl.sha256 !== sha256) throw new Error('curl upload: the server’s sha256 differs from the file’s')
          await call(ctx, 'DELETE', `/api/v1/files/${byCurl.id}`)
          curlUps.push(byCurl.up)
          curlDowns.push(byCurl.down)
        }
      }
    }
    finally {
      await rm(SOURCE, { force: true })
    }
    const copy = { streamed: median(copies.map(c => c.streamed)), kernel: median(copies.map(c => c.kernel)) }
    const up = { seconds: median(ups) }
    const down = { seconds: median(downs) }

    const rate = (seconds: number) => `${(SIZE / MB / seconds).toFixed(0)} MB/s`
    console.log(`  200 MB over loopback, median of ${RUNS} runs: upload ${rate(up.seconds)} (${up.seconds.toFixed(2)} s), download ${rate(down.seconds)} (${down.seconds.toFixed(2)} s); sha256 identical every time`)
    console.log(`  plain copy on the same disk: streamed ${rate(copy.streamed)} (${copy.streamed.toFixed(2)} s), kernel copyFile ${rate(copy.kernel)} (${copy.kernel.toFixed(2)} s)`)
    console.log(`  upload takes ${(up.seconds / copy.streamed).toFixed(2)}× the streamed copy's time, download ${(down.seconds / copy.streamed).toFixed(2)}× (goal ≤ 2×)`)
    if (curlUps.length) {
      const [cu, cd] = [median(curlUps), median(curlDowns)]
      console.log(`  the same by curl: upload ${rate(cu)} (${cu.toFixed(2)} s, ${(cu / copy.streamed).toFixed(2)}×), download ${rate(cd)} (${cd.toFixed(2)} s, ${(cd / copy.streamed).toFixed(2)}×)`)
    }
    console.log(`  server RSS: ${(before / MB).toFixed(0)} MB before, peak ${(peakUp / MB).toFixed(0)} MB uploading (+${((peakUp - before) / MB).toFixed(1)}), `
      + `${(peakDown / MB).toFixed(0)} MB downloading (+${((peakDown - before) / MB).toFixed(1)}) (goal: growth < 100 MB)`)

    // CSV import: 100,000 rows over 10 revisions (a reading holds at most 10,000 values)
    const key = `bench_${randomBytes(3).toString('hex')}`
    await call(ctx, 'POST', `/api/v1/builds/${build.slug}/targets`, { key, name: 'Bench torque', unit: 'N·m', comparator: 'atLeast', threshold: 40 })
    const labels = Array.from({ length: 10 }, (_, i) => `C${i + 1}`)
    for (const label of labels) await call(ctx, 'POST', `/api/v1/builds/${build.slug}/revisions`, { label })
    const csv = csvOf(labels)
    const form = new FormData()
    form.append('file', new Blob([csv]), 'bench-100k.csv')
    const file = await call(ctx, 'POST', `/api/v1/builds/${build.slug}/files`, form) as { id: string }
    let started = performance.now()
    await call(ctx, 'GET', `/api/v1/builds/${build.slug}/import/preview?file=${file.id}`)
    const preview = (performance.now() - started) / 1000
    started = performance.now()
    const imported = await call(ctx, 'POST', `/api/v1/builds/${build.slug}/import`, { file: file.id, target: key, valueColumn: 'torque_nm', revisionColumn: 'rev', unit: 'N·m', resolution: 0.001 }) as { rows: number, readings: unknown[] }
    const seconds = (performance.now() - started) / 1000
    console.log(`  CSV import of ${imported.rows.toLocaleString('en')} rows (${(csv.length / MB).toFixed(1)} MB) into ${imported.readings.length} readings: ${seconds.toFixed(2)} s `
      + `(${Math.round(imported.rows / seconds).toLocaleString('en')} rows/s); its preview ${preview.toFixed(2)} s`)
  },
}

/** Downloads a build's archive, hashing it on the way. */
function exportArchive(ctx: Ctx, build: string): Promise<{ bytes: number, seconds: number, status: number }> {
  const started = performance.now()
  return new Promise((resolve, reject) => {
    request(`${BASE_URL}/api/v1/builds/${build}/export`, { headers: { cookie: ctx.cookie } }, (res) => {
      let bytes = 0
      res.on('data', (chunk: Buffer) => {
        bytes += chunk.length
      })
      res.on('end', () => resolve({ bytes, seconds: (performance.now() - started) / 1000, status: res.statusCode ?? 0 }))
      res.on('error', reject)
    }).on('error', reject).end()
  })
}

// The `archive` section: the export of a build holding 200 MB of evidence (one file of random
// bytes, which gzip can't shrink), its time against a plain copy, and the server's RSS meanwhile.
export const archiveSection = {
  name: 'archive',
  async run(ctx: Ctx) {
    const pid = listeningPid(Number(new URL(BASE_URL).port)) ?? Number(process.env.RATCHET_BENCH_APP_PID)
    if (!pid) throw new Error('the server’s process was not found (set RATCHET_BENCH_APP_PID)')
    const build = await call(ctx, 'POST', '/api/v1/builds', { team: ctx.teamSlug, name: `Bench archive ${randomBytes(3).toString('hex')}` }) as { slug: string }
    const key = `bench_${randomBytes(3).toString('hex')}`
    await call(ctx, 'POST', `/api/v1/builds/${build.slug}/targets`, { key, name: 'Bench torque', unit: 'N·m', comparator: 'atLeast', threshold: 40 })
    await call(ctx, 'POST', `/api/v1/builds/${build.slug}/revisions`, { label: 'A1' })
    await call(ctx, 'POST', `/api/v1/builds/${build.slug}/readings`, { revision: 'A1', target: key, values: Array.from({ length: 1000 }, (_, i) => 41 + Math.sin(i)), unit: 'N·m' })
    await writeSource()
    try {
      await upload(ctx, build.slug)
      const copies: number[] = []
      const times: number[] = []
      const before = rssOf(pid)
      let peak = before
      let bytes = 0
      for (let run = 0; run < 3; run++) {
        copies.push((await plainCopy()).streamed)
        const watch = watchRss(pid)
        const got = await exportArchive(ctx, build.slug)
        peak = Math.max(peak, watch.stop())
        if (got.status !== 200) throw new Error(`export: ${got.status}`)
        times.push(got.seconds)
        bytes = got.bytes
      }
      const [t, c] = [median(times), median(copies)]
      console.log(`  export of a build with 200 MB of evidence, median of 3: ${(bytes / MB).toFixed(1)} MB in ${t.toFixed(2)} s (${(bytes / MB / t).toFixed(0)} MB/s, gzip level 1 included); `
        + `a plain streamed copy of the evidence ${c.toFixed(2)} s (${(t / c).toFixed(2)}×)`)
      console.log(`  server RSS: ${(before / MB).toFixed(0)} MB before, peak ${(peak / MB).toFixed(0)} MB exporting (+${((peak - before) / MB).toFixed(1)}) (goal: growth < 100 MB)`)
    }
    finally {
      await rm(SOURCE, { force: true })
    }
  },
}
