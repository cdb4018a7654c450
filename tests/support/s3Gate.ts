import { createHash } from 'node:crypto'
import { existsSync, rmSync } from 'node:fs'
import { createServer, request, type IncomingMessage, type ServerResponse } from 'node:http'
import type { AddressInfo } from 'node:net'
import { join } from 'node:path'
import { Hash } from '@smithy/core/serde'
import { SignatureV4 } from '@smithy/signature-v4'
import type { HttpRequest, QueryParameterBag } from '@smithy/types'

// A gate in front of s3rver for the S3 tests. s3rver 3.7.1 (lib/middleware/authentication.js)
// checks of a Signature Version 4 request only that the access key id is one of its own, that
// x-amz-content-sha256 is present and looks like a hash, that the Authorization header has its
// three parts and that x-amz-date is within 15 minutes: it computes no signature ("Signature
// version 4 calculation is unimplemented") and never hashes the payload ("skip payload
// verification"). It also answers AbortMultipartUpload (DELETE ?uploadId) with a 405 and keeps the
// parts. So the app speaks to this gate, which
// - signs each request again, from what arrived on the wire, with @smithy/signature-v4 (the AWS
//   signer, fed the headers the request says it signed and the key of its key id) and refuses a
//   mismatch with 403 SignatureDoesNotMatch, as S3 does;
// - hashes the body and refuses one that isn't what x-amz-content-sha256 says
//   (XAmzContentSHA256Mismatch); UNSIGNED-PAYLOAD and streaming payloads are refused, since
//   the client never sends them;
// - carries out AbortMultipartUpload on s3rver's own upload folder (204, or 404 NoSuchUpload);
// - passes everything else to s3rver unchanged, and logs every request.

export interface GateEntry {
  method: string
  /** the key (path inside the bucket), decoded */
  key: string
  query: URLSearchParams
  range: string | undefined
  bytes: number
  status: number
  /** the S3 error code the gate answered with, when it refused */
  refused?: string
}

export interface S3Gate {
  url: string
  log: GateEntry[]
  close: () => Promise<void>
}

const sha256 = (b: Buffer | string) => createHash('sha256').update(b).digest('hex')

function readBody(req: IncomingMessage): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = []
    req.on('data', (c: Buffer) => chunks.push(c)).on('end', () => resolve(Buffer.concat(chunks))).on('error', reject)
  })
}

/** The query string as the signer takes it: names to decoded values (a repeated name to a list). */
function queryBag(raw: string): QueryParameterBag {
  const bag: Record<string, string | string[]> = {}
  for (const pair of raw.split('&').filter(Boolean)) {
    const [k, v = ''] = pair.split(/=(.*)/s).map(decodeURIComponent) as [string, string?]
    const had = bag[k]
    bag[k] = had === undefined ? v : [...(Array.isArray(had) ? had : [had]), v]
  }
  return bag
}

/** Why S3 would refuse the request (an error code and message), or null when it is signed right. */
export async function checkSigV4(req: { method: string, rawUrl: string, headers: IncomingMessage['headers'] }, body: Buffer, secrets: Record<string, string>, region: string, now = new Date()): Promise<[string, string] | null> {
  const auth = String(req.headers.authorization ?? '')
  const m = /^AWS4-HMAC-SHA256 Credential=([^/,]+)\/(\d{8})\/([^/,]+)\/s3\/aws4_request, ?SignedHeaders=([a-z0-9;-]+), ?Signature=([0-9a-f]{64})$/.exec(auth)
  if (!m) return ['AccessDenied', 'No AWS4-HMAC-SHA256 Authorization header of the expected form']
  const [, keyId, day, scopeRegion, signedList, signature] = m as unknown as [string, string, string, string, string, string]
  const secret = secrets[keyId]
  if (secret === undefined) return ['InvalidAccessKeyId', `Unknown access key id ${keyId}`]
  if (scopeRegion !== region) return ['AuthorizationHeaderMalformed', `The region ${scopeRegion} is wrong; expecting ${region}`]
  const amzDate = String(req.headers['x-amz-date'] ?? '')
  const when = /^(\d{4})(\d{2})(\d{2})T(\d{2})(\d{2})(\d{2})Z$/.exec(amzDate)
  if (!when || amzDate.slice(0, 8) !== day) return ['AccessDenied', 'x-amz-date is missing, malformed or not the credential’s day']
  const at = new Date(Date.UTC(+when[1]!, +when[2]! - 1, +when[3]!, +when[4]!, +when[5]!, +when[6]!))
  if (Math.abs(now.getTime() - at.getTime()) > 15 * 60_000) return ['RequestTimeTooSkewed', 'x-amz-date is more than 15 minutes off']
  const signed = signedList.split(';')
  for (const required of ['host', 'x-amz-content-sha256', 'x-amz-date']) {
    if (!signed.includes(required)) return ['AccessDenied', `${required} is not among the signed headers`]
  }
  const declared = String(req.headers['x-amz-content-sha256'] ?? '')
  if (!/^[0-9a-f]{64}$/.test(declared)) return ['InvalidRequest', `x-amz-content-sha256 is ${declared || 'missing'}; only a payload hash is accepted here`]
  if (declared !== sha256(body)) return ['XAmzContentSHA256Mismatch', 'The provided x-amz-content-sha256 header does not match what was computed']

  // the request again, with only the headers it says it signed, signed with the key id's secret
  const [path, rawQuery = ''] = req.rawUrl.split(/\?(.*)/s) as [string, string?]
  const headers = Object.fromEntries(signed.map((name) => {
    const value = req.headers[name]
    return [name, Array.isArray(value) ? value.join(',') : String(value ?? '')]
  }))
  const signer = new SignatureV4({
    service: 's3',
    region,
    credentials: { accessKeyId: keyId, secretAccessKey: secret },
    sha256: Hash.bind(null, 'sha256'),
    // S3 signs the path as sent (its segments encoded once), not encoded again
    uriEscapePath: false,
  })
  const unsigned = { method: req.method, protocol: 'http:', hostname: String(req.headers.host ?? ''), path, query: queryBag(rawQuery), headers } as HttpRequest
  const resigned = await signer.sign(unsigned, { signingDate: at, signableHeaders: new Set(signed) })
  const expected = /SignedHeaders=([a-z0-9;-]+), ?Signature=([0-9a-f]{64})$/.exec(String(resigned.headers.authorization))
  if (!expected || expected[1] !== signedList || expected[2] !== signature) {
    return ['SignatureDoesNotMatch', 'The request signature we calculated does not match the signature you provided']
  }
  return null
}

function s3Error(res: ServerResponse, status: number, code: string, message: string) {
  res.writeHead(status, { 'content-type': 'application/xml' })
  res.end(`<?xml version="1.0" encoding="UTF-8"?>\n<Error><Code>${code}</Code><Message>${message}</Message></Error>`)
}

/** Starts the gate on an ephemeral loopback port in front of s3rver at `upstream`, whose data folder is `dataDir`. */
export async function startS3Gate(opts: { upstream: string, dataDir: string, region: string, secrets: Record<string, string> }): Promise<S3Gate> {
  const log: GateEntry[] = []
  const upstream = new URL(opts.upstream)
  const server = createServer(async (req, res) => {
    const url = new URL(req.url!, 'http://gate')
    const [, bucket = '', ...rest] = url.pathname.split('/').map(decodeURIComponent)
    const entry: GateEntry = { method: req.method!, key: rest.join('/'), query: url.searchParams, range: req.headers.range, bytes: 0, status: 0 }
    log.push(entry)
    // the status is logged as it is sent, before the body: a client may be done with it sooner
    const writeHead = res.writeHead.bind(res) as (status: number, headers?: Record<string, unknown>) => ServerResponse
    res.writeHead = ((status: number, headers?: Record<string, unknown>) => {
      entry.status = status
      return writeHead(status, headers)
    }) as typeof res.writeHead
    try {
      const body = await readBody(req)
      entry.bytes = body.length
      const refused = await checkSigV4({ method: req.method!, rawUrl: req.url!, headers: req.headers }, body, opts.secrets, opts.region)
      if (refused) {
        entry.refused = refused[0]
        s3Error(res, refused[0] === 'InvalidRequest' ? 400 : 403, ...refused)
        return
      }
      const uploadId = url.searchParams.get('uploadId')
      if (req.method === 'DELETE' && uploadId !== null && entry.key) {
        // AbortMultipartUpload, on s3rver's folder of open uploads (<bucket>/._S3rver_uploads/<id>)
        const dir = join(opts.dataDir, bucket, '._S3rver_uploads', uploadId)
        if (!/^[0-9a-f]+$/.test(uploadId) || !existsSync(dir)) {
          s3Error(res, 404, 'NoSuchUpload', 'The specified multipart upload does not exist')
          return
        }
        rmSync(dir, { recursive: true })
        res.writeHead(204).end()
        return
      }
      const headers = { ...req.headers, 'content-length': String(body.length) }
      delete headers['transfer-encoding']
      // the body is here already: s3rver needn't answer 100 Continue to it
      delete headers.expect
      const forward = request({ host: upstream.hostname, port: upstream.port, method: req.method, path: req.url, headers }, (up) => {
        res.writeHead(up.statusCode!, up.headers)
        up.pipe(res)
      })
      forward.on('error', err => (res.headersSent ? res.destroy(err) : s3Error(res, 502, 'BadGateway', String(err))))
      forward.end(body)
    }
    catch (err) {
      if (!res.headersSent) s3Error(res, 500, 'InternalError', String(err))
    }
  })
  await new Promise<void>(r => server.listen(0, '127.0.0.1', r))
  return {
    url: `http://127.0.0.1:${(server.address() as AddressInfo).port}`,
    log,
    close: () => new Promise<void>((r) => {
      server.closeAllConnections()
      server.close(() => r())
    }),
  }
}
