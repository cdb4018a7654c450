import { Readable } from 'node:stream'
import {
  AbortMultipartUploadCommand,
  DeleteObjectCommand,
  GetObjectCommand,
  paginateListObjectsV2,
  S3Client,
  S3ServiceException,
} from '@aws-sdk/client-s3'
import { Upload } from '@aws-sdk/lib-storage'

// An S3-compatible object store for evidence files, spoken to with the AWS SDK (path-style
// URLs: endpoint/bucket/key). Uploads stream through lib-storage's Upload: a stream shorter than
// one part goes in one PutObject, a longer one as a multipart upload of 8 MiB parts, one part in
// flight at a time (a part is the most held in memory). Downloads stream the response body, with
// Range passed through.

export interface S3Config {
  endpoint: string
  bucket: string
  region: string
  accessKeyId: string
  secretAccessKey: string
}

/** The size of a multipart upload's parts (S3 wants at least 5 MiB but for the last). */
export const PART_SIZE = 8 * 1024 * 1024

/** An SDK error as one line naming the call, the key, the HTTP status and S3's error code. */
function described(err: unknown, call: string, key: string): Error {
  if (err instanceof S3ServiceException) {
    return new Error(`S3 ${call} ${key}: ${err.$metadata.httpStatusCode ?? '?'} ${err.name} ${err.message}`.trim(), { cause: err })
  }
  return err instanceof Error ? err : new Error(String(err))
}

export class S3Store {
  private client: S3Client
  private bucket: string

  constructor(config: S3Config) {
    for (const k of ['endpoint', 'bucket', 'accessKeyId', 'secretAccessKey'] as const) {
      if (!config[k]) throw new Error(`files.s3.${k} is not set (NUXT_FILES_S3_${k.replace(/[A-Z]/g, c => `_${c}`).toUpperCase()})`)
    }
    this.bucket = config.bucket
    this.client = new S3Client({
      endpoint: config.endpoint,
      region: config.region,
      forcePathStyle: true,
      credentials: { accessKeyId: config.accessKeyId, secretAccessKey: config.secretAccessKey },
      // checksums only where S3 requires them: S3-compatible servers differ in the optional ones,
      // and an upload's integrity is checked by its signed payload hash
      requestChecksumCalculation: 'WHEN_REQUIRED',
      responseChecksumValidation: 'WHEN_REQUIRED',
    })
  }

  async put(key: string, body: AsyncIterable<Buffer> | Readable): Promise<void> {
    const upload = new Upload({
      client: this.client,
      params: { Bucket: this.bucket, Key: key, Body: body instanceof Readable ? body : Readable.from(body) },
      partSize: PART_SIZE,
      queueSize: 1,
      // aborted here, so that a failed abort is logged and the upload's own error is the one thrown
      leavePartsOnError: true,
    })
    try {
      await upload.done()
    }
    catch (err) {
      if (upload.uploadId) {
        // an upload left open keeps its parts (and their cost) until a lifecycle rule ends it,
        // and it is no object, so the sweep never sees it: say so rather than stay silent
        await this.client.send(new AbortMultipartUploadCommand({ Bucket: this.bucket, Key: key, UploadId: upload.uploadId })).catch((e) => {
          console.error(`files: could not abort the multipart upload ${upload.uploadId} of ${key}; its parts stay in the bucket:`, e)
        })
      }
      throw described(err, 'PUT', key)
    }
  }

  async get(key: string, range?: { start: number, end: number }): Promise<Readable> {
    const out = await this.client.send(new GetObjectCommand({ Bucket: this.bucket, Key: key, Range: range ? `bytes=${range.start}-${range.end}` : undefined }))
      .catch((err) => { throw described(err, 'GET', key) })
    const body = out.Body as Readable | undefined
    if (!body) throw new Error(`S3 GET ${key}: no body`)
    const status = out.$metadata.httpStatusCode
    // a 200 to a ranged GET would be the whole object where the caller sends only the range
    if (range && status !== 206) {
      body.destroy()
      throw new Error(`S3 GET ${key}: ${status} to a ranged GET (bytes=${range.start}-${range.end}), not 206`)
    }
    return body
  }

  async remove(key: string): Promise<void> {
    // S3 answers 204 for a key that isn't there too
    await this.client.send(new DeleteObjectCommand({ Bucket: this.bucket, Key: key }))
      .catch((err) => {
        if (err instanceof S3ServiceException && err.$metadata.httpStatusCode === 404) return
        throw described(err, 'DELETE', key)
      })
  }

  async* list(): AsyncIterable<{ key: string, modifiedAt: Date }> {
    try {
      for await (const page of paginateListObjectsV2({ client: this.client, pageSize: 1000 }, { Bucket: this.bucket })) {
        for (const item of page.Contents ?? []) {
          if (item.Key) yield { key: item.Key, modifiedAt: item.LastModified ?? new Date(0) }
        }
      }
    }
    catch (err) {
      throw described(err, 'LIST', this.bucket)
    }
  }
}
