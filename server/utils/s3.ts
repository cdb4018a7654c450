import { createHash, createHmac } from 'node:crypto'
import { Readable } from 'node:stream'
import type { ReadableStream as WebReadableStream } from 'node:stream/web'

// An S3-compatible object store for evidence files, spoken to with fetch and Signature
// Version 4 (path-style URLs: endpoint/bucket/key). unstorage's S3 driver needs an optional
// package this project doesn't install and sends whole values, so uploads here go as a
// multipart upload of 8 MiB parts (S3 wants a length for every PUT; a part is the most held in
// memory) and downloads stream the response body, with Range passed through.

export interface S3Config {
  endpoint: string
  bucket: string
  region: string
  accessKeyId: string
  secretAccessKey: string
}

export const EMPTY_SHA256 = 'e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855'

const sha256Hex = (data: string | Buffer) => createHash('sha256').update(data).digest('hex')
const hmac = (key: string | Buffer, data: string) => createHmac('sha256', key).update(data).digest()

/** RFC 3986 percent-encoding, as SigV4 wants it (unreserved characters kept). */
function uriEncode(s: string, keepSlash = false): string {
  const out = encodeURIComponent(s).replace(/[!'()*]/g, c => `%${c.charCodeAt(0).toString(16).toUpperCase()}`)
  return keepSlash ? out.replace(/%2F/g, '/') : out
}

export interface SignInput {
  method: string
  url: URL
  /** headers to sign besides host, x-amz-date and x-amz-content-sha256 */
  headers?: Record<string, string>
  /** hex sha256 of the body, or UNSIGNED-PAYLOAD */
  payloadHash: string
}

/** The headers of a request signed with AWS Signature Version 4 (service s3). */
export function signS3Request(input: SignInput, cred: Pick<S3Config, 'region' | 'accessKeyId' | 'secretAccessKey'>, now = new Date()): Record<string, string> {
  const amzDate = now.toISOString().replace(/[-:]/g, '').replace(/\.\d{3}/, '')
  const day = amzDate.slice(0, 8)
  const headers: Record<string, string> = {
    ...Object.fromEntries(Object.entries(input.headers ?? {}).map(([k, v]) => [k.toLowerCase(), v])),
    'host': input.url.host,
    'x-amz-content-sha256': input.payloadHash,
    'x-amz-date': amzDate,
  }
  const names = Object.keys(headers).sort()
  const canonicalHeaders = names.map(n => `${n}:${headers[n]!.trim().replace(/\s+/g, ' ')}\n`).join('')
  const signedHeaders = names.join(';')
  const query = [...input.url.searchParams.entries()]
    .map(([k, v]) => [uriEncode(k), uriEncode(v)] as const)
    .sort(([a, av], [b, bv]) => (a < b ? -1 : a > b ? 1 : av < bv ? -1 : av > bv ? 1 : 0))
    .map(([k, v]) => `${k}=${v}`)
    .join('&')
  const path = uriEncode(decodeURIComponent(input.url.pathname), true)
  const canonicalRequest = [input.method.toUpperCase(), path, query, canonicalHeaders, signedHeaders, input.payloadHash].join('\n')
  const scope = `${day}/${cred.region}/s3/aws4_request`
  const stringToSign = ['AWS4-HMAC-SHA256', amzDate, scope, sha256Hex(canonicalRequest)].join('\n')
  const key = hmac(hmac(hmac(hmac(`AWS4${cred.secretAccessKey}`, day), cred.region), 's3'), 'aws4_request')
  const signature = createHmac('sha256', key).update(stringToSign).digest('hex')
  return {
    ...headers,
    authorization: `AWS4-HMAC-SHA256 Credential=${cred.accessKeyId}/${scope},SignedHeaders=${signedHeaders},Signature=${signature}`,
  }
}

const PART_SIZE = 8 * 1024 * 1024

function xmlValues(xml: string, tag: string): string[] {
  const out: string[] = []
  const re = new RegExp(`<${tag}>([\\s\\S]*?)</${tag}>`, 'g')
  for (let m = re.exec(xml); m; m = re.exec(xml)) {
    out.push(m[1]!.replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&quot;/g, '"').replace(/&apos;/g, '\'').replace(/&amp;/g, '&'))
  }
  return out
}

export class S3Store {
  constructor(private config: S3Config) {
    for (const k of ['endpoint', 'bucket', 'accessKeyId', 'secretAccessKey'] as const) {
      if (!config[k]) throw new Error(`files.s3.${k} is not set (NUXT_FILES_S3_${k.replace(/[A-Z]/g, c => `_${c}`).toUpperCase()})`)
    }
  }

  private url(key = '', query: Record<string, string> = {}): URL {
    const u = new URL(`${this.config.endpoint.replace(/\/$/, '')}/${uriEncode(this.config.bucket)}${key ? `/${uriEncode(key, true)}` : ''}`)
    for (const [k, v] of Object.entries(query)) u.searchParams.set(k, v)
    return u
  }

  private async call(method: string, url: URL, opts: { body?: Buffer | string, headers?: Record<string, string>, ok?: number[] } = {}) {
    const payload = opts.body === undefined ? EMPTY_SHA256 : sha256Hex(opts.body)
    const headers = signS3Request({ method, url, headers: opts.headers, payloadHash: payload }, this.config)
    delete headers.host
    // a Buffer is a valid fetch body; the DOM typings only lack it
    const res = await fetch(url, { method, headers, body: opts.body as unknown as BodyInit | undefined })
    if (!(opts.ok ?? [200]).includes(res.status)) {
      const text = await res.text().catch(() => '')
      throw new Error(`S3 ${method} ${url.pathname}: ${res.status} ${text.slice(0, 300)}`)
    }
    return res
  }

  async put(key: string, body: AsyncIterable<Buffer>): Promise<void> {
    let chunks: Buffer[] = []
    let held = 0
    let uploadId: string | null = null
    const parts: string[] = []
    const flush = async () => {
      const part = Buffer.concat(chunks, held)
      chunks = []
      held = 0
      if (uploadId === null) {
        const res = await this.call('POST', this.url(key, { uploads: '' }))
        uploadId = xmlValues(await res.text(), 'UploadId')[0] ?? null
        if (!uploadId) throw new Error('S3 CreateMultipartUpload: no UploadId in the answer')
      }
      const res = await this.call('PUT', this.url(key, { partNumber: String(parts.length + 1), uploadId }), { body: part })
      parts.push(res.headers.get('etag') ?? '')
    }
    try {
      for await (const chunk of body) {
        chunks.push(chunk)
        held += chunk.length
        if (held >= PART_SIZE) await flush()
      }
      if (uploadId === null) {
        // small enough for one PUT
        await this.call('PUT', this.url(key), { body: Buffer.concat(chunks, held) })
        return
      }
      if (held > 0) await flush()
      const xml = `<CompleteMultipartUpload>${parts.map((etag, i) => `<Part><PartNumber>${i + 1}</PartNumber><ETag>${etag.replace(/&/g, '&amp;').replace(/</g, '&lt;')}</ETag></Part>`).join('')}</CompleteMultipartUpload>`
      const res = await this.call('POST', this.url(key, { uploadId }), { body: xml, headers: { 'content-type': 'application/xml' } })
      // S3 can answer 200 with an error document after a long wait
      const text = await res.text()
      if (text.includes('<Error>')) throw new Error(`S3 CompleteMultipartUpload: ${text.slice(0, 300)}`)
    }
    catch (err) {
      if (uploadId !== null) {
        // an upload left open keeps its parts (and their cost) until a lifecycle rule ends it,
        // and it is no object, so the sweep never sees it: say so rather than stay silent
        await this.call('DELETE', this.url(key, { uploadId }), { ok: [204, 200, 404] }).catch((e) => {
          console.error(`files: could not abort the multipart upload ${uploadId} of ${key}; its parts stay in the bucket:`, e)
        })
      }
      throw err
    }
  }

  async get(key: string, range?: { start: number, end: number }): Promise<Readable> {
    const headers: Record<string, string> = range ? { range: `bytes=${range.start}-${range.end}` } : {}
    // a 200 to a ranged GET would be the whole object where the caller sends only the range
    const res = await this.call('GET', this.url(key), { headers, ok: range ? [206] : [200] })
    if (!res.body) throw new Error(`S3 GET ${key}: no body`)
    return Readable.fromWeb(res.body as unknown as WebReadableStream<Uint8Array>)
  }

  async remove(key: string): Promise<void> {
    await this.call('DELETE', this.url(key), { ok: [200, 204, 404] })
  }

  async* list(): AsyncIterable<{ key: string, modifiedAt: Date }> {
    let token: string | null = null
    do {
      const query: Record<string, string> = { 'list-type': '2', 'max-keys': '1000' }
      if (token) query['continuation-token'] = token
      const xml = await (await this.call('GET', this.url('', query))).text()
      for (const item of xmlValues(xml, 'Contents')) {
        const key = xmlValues(item, 'Key')[0]
        const modified = xmlValues(item, 'LastModified')[0]
        if (key) yield { key, modifiedAt: new Date(modified ?? 0) }
      }
      token = xmlValues(xml, 'IsTruncated')[0] === 'true' ? (xmlValues(xml, 'NextContinuationToken')[0] ?? null) : null
    } while (token)
  }
}
