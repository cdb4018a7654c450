import { createHash } from 'node:crypto'
import type { IncomingHttpHeaders, IncomingMessage } from 'node:http'
import { Readable, Transform, type TransformCallback } from 'node:stream'
import { fileTypeFromBuffer } from 'file-type'
import { createError } from 'h3'
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { FileCreated } from '#shared/types/files'
import { kindOf, sniffTextType } from '#shared/utils/contentTypes'
import { formatBytes, sanitizeFileName } from '#shared/utils/fileNames'
import { UploadFields } from '#shared/utils/fileSchemas'
import type { BuildRow } from '../../db/tables'
import { recordAudit, type Actor } from '../audit'
import type { Db } from '../db'
import { UPLOAD_CHUNK as CHUNK, readMultipart } from './multipart'
import { filesConfig, newStorageKey, useFileStore, type FileStore } from './storage'

// Evidence files stored: streamed uploads (multipart → size limit, sha256 and type sniffing →
// the file store) under the team's quota. Bytes are stored first and the row written after; a
// failure in between removes the bytes, and the sweep (sweep.ts) removes whatever a crash
// leaves behind.

/** The type sniffing reads this many first bytes (what file-type needs for most formats). */
const SNIFF_BYTES = 4100
/** Room for the multipart framing and the text fields around the file. */
const MULTIPART_SLACK = 64 * 1024

const statusOf = (e: unknown) => (e as { statusCode?: number })?.statusCode

function tooLarge(max: number) {
  return createError({ statusCode: 413, message: `The file is larger than the limit of ${formatBytes(max)}`, data: { limit: max } })
}

function quotaFull(used: number, quota: number) {
  return createError({
    statusCode: 413,
    message: `The team's storage quota is full: ${formatBytes(used)} of ${formatBytes(quota)} used, and this file needs more than the ${formatBytes(Math.max(0, quota - used))} left. Delete files the team no longer needs.`,
    data: { usedBytes: used, quotaBytes: quota },
  })
}

/** Bytes stored by a team's builds. */
export async function teamUsage(db: Db, teamId: string): Promise<number> {
  const row = await db('files').join('builds', 'builds.id', 'files.build_id').where('builds.team_id', teamId)
    .sum({ used: 'files.size' }).first() as { used: number | string | null } | undefined
  return Number(row?.used ?? 0)
}

/**
 * Counts bytes, hashes them and keeps the first ones for sniffing; errors past the limit. Passes
 * the bytes on in 1 MiB pieces: storage then writes a few hundred large pieces rather than
 * thousands of socket-sized ones.
 */
class Meter extends Transform {
  bytes = 0
  private hash = createHash('sha256')
  private head: Buffer[] = []
  private headBytes = 0
  private held: Buffer[] = []
  private heldBytes = 0
  constructor(private limit: number, private overLimit: () => Error) {
    super({ highWaterMark: CHUNK })
  }

  override _transform(chunk: Buffer, _encoding: BufferEncoding, done: TransformCallback) {
    this.bytes += chunk.length
    if (this.bytes > this.limit) {
      done(this.overLimit())
      return
    }
    this.hash.update(chunk)
    if (this.headBytes < SNIFF_BYTES) {
      const part = Buffer.from(chunk.subarray(0, SNIFF_BYTES - this.headBytes))
      this.head.push(part)
      this.headBytes += part.length
    }
    this.held.push(chunk)
    this.heldBytes += chunk.length
    done(null, this.heldBytes >= CHUNK ? this.release() : undefined)
  }

  override _flush(done: TransformCallback) {
    done(null, this.heldBytes > 0 ? this.release() : undefined)
  }

  private release() {
    const piece = Buffer.concat(this.held, this.heldBytes)
    this.held = []
    this.heldBytes = 0
    return piece
  }

  firstBytes() { return Buffer.concat(this.head) }
  digest() { return this.hash.digest('hex') }
}

interface Attachment { revisionId: string | null, readingId: string | null, findingId: string | null }

/**
 * The revision, reading and finding named by an upload's fields, all in the build (404
 * otherwise). A reading brings its revision; naming another revision with it is a 422.
 */
export async function resolveAttachment(db: Db, buildId: string, f: z.output<typeof UploadFields>, lock = false): Promise<Attachment> {
  const out: Attachment = { revisionId: null, readingId: null, findingId: null }
  if (f.reading) {
    const q = db('readings as rd').join('targets as t', 't.id', 'rd.target_id').join('revisions as rv', 'rv.id', 'rd.revision_id')
      .where({ 'rd.id': f.reading, 't.build_id': buildId }).first('rd.id', 'rv.id as revision_id', 'rv.label')
    const r = await (lock ? q.forShare('rd') : q) as { id: string, revision_id: string, label: string } | undefined
    if (!r) throw createError({ statusCode: 404, message: 'reading: no such reading in this build', data: { fields: { reading: 'Not found in this build' } } })
    if (f.revision && f.revision.toLowerCase() !== r.label.toLowerCase()) {
      throw createError({ statusCode: 422, message: `reading: that reading is on revision ${r.label}, not ${f.revision}`, data: { fields: { reading: `On revision ${r.label}` } } })
    }
    out.readingId = r.id
    out.revisionId = r.revision_id
  }
  if (f.revision && !out.revisionId) {
    const q = db('revisions').where({ build_id: buildId }).whereRaw('lower(label) = lower(?)', [f.revision]).first('id')
    const rev = await (lock ? q.forShare() : q)
    if (!rev) throw createError({ statusCode: 404, message: `revision: Revision "${f.revision}" not found in this build`, data: { fields: { revision: 'Not found in this build' } } })
    out.revisionId = rev.id
  }
  if (f.finding) {
    const q = db('findings').where({ id: f.finding, build_id: buildId }).first('id')
    const found = await (lock ? q.forShare() : q)
    if (!found) throw createError({ statusCode: 404, message: 'finding: no such finding in this build', data: { fields: { finding: 'Not found in this build' } } })
    out.findingId = found.id
  }
  return out
}

/** The content type from the first bytes: a binary signature, else text rules. */
export async function sniffContentType(head: Buffer, name: string): Promise<string> {
  const found = await fileTypeFromBuffer(head).catch(() => undefined)
  return found?.mime ?? sniffTextType(head, name)
}

/**
 * POST /api/v1/builds/:build/files: streams the part named "file" of a multipart body (the
 * request's stream and headers) to storage, never holding it whole, then writes its row. 413
 * past the size limit or the team's quota, with nothing kept.
 */
export async function receiveUpload(db: Db, actor: Actor, input: { build: Pick<BuildRow, 'id' | 'team_id' | 'slug'>, body: IncomingMessage, headers: IncomingHttpHeaders }): Promise<FileCreated> {
  const { build, headers } = input
  if (!/^multipart\/form-data\b/i.test(headers['content-type'] ?? '')) {
    throw createError({ statusCode: 400, message: 'Send the file as multipart/form-data, in a field named "file"' })
  }
  const config = filesConfig()
  const teamId = build.team_id
  const quota = config.teamQuotaBytes > 0 ? config.teamQuotaBytes : null
  const used = quota === null ? 0 : await teamUsage(db, teamId)
  if (quota !== null && used >= quota) throw quotaFull(used, quota)
  const declared = Number(headers['content-length'])
  if (Number.isFinite(declared) && declared > config.maxBytes + MULTIPART_SLACK) throw tooLarge(config.maxBytes)
  const room = quota === null ? Number.POSITIVE_INFINITY : quota - used
  const limit = Math.min(config.maxBytes, room)
  const overLimit = () => (limit === config.maxBytes ? tooLarge(config.maxBytes) : quotaFull(used, quota!))

  const store = useFileStore()
  const key = newStorageKey()
  let written = false
  try {
    const { fields, file } = await readMultipart(input.body, headers, async (stream, filename, before, signal) => {
      // fields sent ahead of the file are checked before a byte is stored
      await resolveAttachment(db, build.id, parseOr400(UploadFields, before))
      // the body may have failed meanwhile (its stream is then destroyed and would never end)
      if (signal.aborted) throw signal.reason
      const meter = new Meter(limit, overLimit)
      // the store's promise carries the meter's errors (over the limit, a broken stream, a
      // failure elsewhere in the body)
      meter.on('error', () => {})
      stream.on('error', err => meter.destroy(err))
      const stop = () => meter.destroy(signal.reason as Error)
      signal.addEventListener('abort', stop, { once: true })
      stream.pipe(meter)
      written = true
      try {
        await store.put(key, meter)
      }
      catch (err) {
        stream.unpipe(meter)
        stream.resume()
        // the limits, a failed body and a client that went away come with their status; anything
        // else is the store
        if (signal.aborted) throw signal.reason
        if (statusOf(err)) throw err
        console.error(`files: storing ${key} failed:`, err)
        throw createError({ statusCode: 503, message: 'The file can’t be stored right now; try again in a while' })
      }
      finally {
        signal.removeEventListener('abort', stop)
      }
      return { filename, bytes: meter.bytes, sha256: meter.digest(), head: meter.firstBytes() }
    })
    if (!file) throw createError({ statusCode: 400, message: 'No file: send it in a field named "file"', data: { fields: { file: 'Required' } } })
    if (file.bytes === 0) throw createError({ statusCode: 400, message: 'The file is empty', data: { fields: { file: 'Empty' } } })
    const attach = parseOr400(UploadFields, fields)
    const name = sanitizeFileName(file.filename)
    const contentType = (await sniffContentType(file.head, name)).slice(0, 100)

    const row = await db.transaction(async (trx) => {
      // one upload of a team at a time passes this point: the quota check and the insert agree
      await trx('teams').where({ id: teamId }).forUpdate().first('id')
      if (quota !== null) {
        const now = await teamUsage(trx, teamId)
        if (now + file.bytes > quota) throw quotaFull(now, quota)
      }
      const where = await resolveAttachment(trx, build.id, attach, true)
      const [inserted] = await trx('files').insert({
        build_id: build.id,
        revision_id: where.revisionId,
        reading_id: where.readingId,
        finding_id: where.findingId,
        storage_key: key,
        name,
        size: file.bytes,
        content_type: contentType,
        kind: kindOf(contentType),
        sha256: file.sha256,
        uploaded_by: actor.userId,
        rig_token_id: actor.rigTokenId,
      }).returning('*')
      await recordAudit(trx, actor, {
        action: 'file.uploaded',
        teamId,
        detail: { build: build.slug, file: inserted!.id, name, size: file.bytes, sha256: file.sha256 },
      })
      return inserted!
    })
    return { id: row.id, name: row.name, size: Number(row.size), sha256: row.sha256, contentType: row.content_type }
  }
  catch (err) {
    if (written) {
      await store.remove(key).catch((e) => {
        console.error(`files: could not remove ${key} after a failed upload (the sweep will):`, e)
      })
    }
    throw err
  }
}

/**
 * Stores bytes the server already has (the demo seed) the way an upload is stored: bytes first,
 * then the row in the caller's transaction; the bytes are removed again if the row fails.
 */
export async function storeBytes(trx: Knex.Transaction, store: FileStore, file: {
  buildId: string
  name: string
  bytes: Buffer
  revisionId?: string | null
  readingId?: string | null
  findingId?: string | null
  uploadedBy?: string | null
}): Promise<string> {
  const key = newStorageKey()
  const name = sanitizeFileName(file.name)
  const contentType = await sniffContentType(file.bytes.subarray(0, SNIFF_BYTES), name)
  await store.put(key, Readable.from([file.bytes]))
  try {
    const [row] = await trx('files').insert({
      build_id: file.buildId,
      revision_id: file.revisionId ?? null,
      reading_id: file.readingId ?? null,
      finding_id: file.findingId ?? null,
      storage_key: key,
      name,
      size: file.bytes.length,
      content_type: contentType,
      kind: kindOf(contentType),
      sha256: createHash('sha256').update(file.bytes).digest('hex'),
      uploaded_by: file.uploadedBy ?? null,
    }).returning('id')
    return row!.id
  }
  catch (err) {
    await store.remove(key).catch(() => {})
    throw err
  }
}
