import { createHash } from 'node:crypto'
import { Readable, Transform, type TransformCallback } from 'node:stream'
import { pipeline } from 'node:stream/promises'
import busboy from 'busboy'
import { fileTypeFromBuffer } from 'file-type'
import { createError, type H3Event } from 'h3'
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { FileCreated, FileList, FileView, StorageUsage } from '../../shared/types/files'
import { etagMatches, parseRange } from '../../shared/utils/byteRanges'
import { deliveryOf, kindOf, sniffTextType } from '../../shared/utils/contentTypes'
import { contentDisposition, formatBytes, sanitizeFileName } from '../../shared/utils/fileNames'
import { UploadFields, type FileListQuery } from '../../shared/utils/fileSchemas'
import type { BuildAccess } from './auth'
import { filesConfig, newStorageKey, useFileStore, type FileStore } from './storage'

// Evidence files: streamed uploads (busboy → size limit, sha256 and type sniffing → the file
// store), downloads with ranges and safe headers, listing, deleting. Bytes are stored first and
// the row written after; a failure in between removes the bytes, and the sweep
// (scripts/sweep-files.ts) removes whatever a crash leaves behind.

type Db = Knex | Knex.Transaction

export interface FileRow {
  id: string
  build_id: string
  revision_id: string | null
  reading_id: string | null
  finding_id: string | null
  storage_key: string
  name: string
  size: number
  content_type: string
  kind: string
  sha256: string
  uploaded_by: string | null
  rig_token_id: string | null
  created_at: Date
}

/** The type sniffing reads this many first bytes (what file-type needs for most formats). */
const SNIFF_BYTES = 4100
/** Stream buffers of 1 MiB: far fewer hand-offs than the 16–64 KiB defaults, still bounded. */
const CHUNK = 1024 * 1024
/** Room for the multipart framing and the text fields around the file. */
const MULTIPART_SLACK = 64 * 1024

const fileNotFound = () => createError({ statusCode: 404, message: 'File not found' })
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

interface Received { filename: string, bytes: number, sha256: string, head: Buffer }

/**
 * Parses a multipart body from the request stream. `onFile` consumes the part named "file"
 * (only one is allowed) and gets the text fields sent before it. On any failure the rest of the
 * body is read and dropped, so the client gets the answer.
 */
function readMultipart(event: H3Event, onFile: (stream: Readable, filename: string, fieldsBefore: Record<string, string>) => Promise<Received>) {
  const req = event.node.req
  return new Promise<{ fields: Record<string, string>, file: Received | null }>((resolve, reject) => {
    let parser: busboy.Busboy
    try {
      parser = busboy({ headers: req.headers, defParamCharset: 'utf8', highWaterMark: CHUNK, fileHwm: CHUNK, limits: { files: 1, fields: 8, parts: 10, fieldSize: 1024, headerPairs: 20 } })
    }
    catch {
      reject(createError({ statusCode: 400, message: 'The multipart body has no boundary; send it as multipart/form-data' }))
      return
    }
    const fields: Record<string, string> = {}
    let pending: Promise<Received> | null = null
    let current: Readable | null = null
    let settled = false
    const fail = (err: unknown) => {
      if (settled) return
      settled = true
      req.unpipe(parser)
      req.resume()
      current?.destroy(err as Error)
      // answer once the file's bytes are written or given up, so the caller can remove them
      Promise.allSettled([pending]).then(() => reject(err))
    }
    parser.on('file', (name, stream, info) => {
      // its errors reach the caller through `pending` and `fail`; without a listener, a stream
      // destroyed by `fail` before anyone read it would throw outside any request
      stream.on('error', () => {})
      if (name !== 'file') {
        stream.resume()
        fail(createError({ statusCode: 400, message: `Send the file in a field named "file" (got "${name}")` }))
        return
      }
      current = stream
      pending = onFile(stream, info.filename, { ...fields })
      pending.catch(fail)
    })
    parser.on('field', (name, value, info) => {
      if (info.nameTruncated || info.valueTruncated) fail(createError({ statusCode: 400, message: `The field "${name.slice(0, 40)}" is too long` }))
      else fields[name] = value
    })
    parser.on('filesLimit', () => fail(createError({ statusCode: 400, message: 'Send one file per request' })))
    parser.on('fieldsLimit', () => fail(createError({ statusCode: 400, message: 'Too many fields: send file, and optionally revision, reading and finding' })))
    parser.on('partsLimit', () => fail(createError({ statusCode: 400, message: 'Too many parts in the multipart body' })))
    parser.on('error', () => fail(createError({ statusCode: 400, message: 'The multipart body is malformed' })))
    parser.on('close', () => {
      if (settled) return
      Promise.resolve(pending).then((file) => {
        if (settled) return
        settled = true
        resolve({ fields, file })
      }, fail)
    })
    req.on('close', () => {
      if (!req.complete) fail(createError({ statusCode: 400, message: 'The upload was interrupted' }))
    })
    req.pipe(parser)
  })
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
    const rev = await (lock ? q.forShare() : q) as { id: string } | undefined
    if (!rev) throw createError({ statusCode: 404, message: `revision: Revision "${f.revision}" not found in this build`, data: { fields: { revision: 'Not found in this build' } } })
    out.revisionId = rev.id
  }
  if (f.finding) {
    const q = db('findings').where({ id: f.finding, build_id: buildId }).first('id')
    const found = await (lock ? q.forShare() : q) as { id: string } | undefined
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
 * POST /api/v1/builds/:build/files: streams the part named "file" to storage, never holding it
 * whole, then writes its row. 413 past the size limit or the team's quota, with nothing kept.
 */
export async function receiveUpload(event: H3Event, access: BuildAccess): Promise<FileCreated> {
  const req = event.node.req
  if (!/^multipart\/form-data\b/i.test(req.headers['content-type'] ?? '')) {
    throw createError({ statusCode: 400, message: 'Send the file as multipart/form-data, in a field named "file"' })
  }
  const config = filesConfig()
  const db = useDb()
  const teamId = access.build.team_id
  const quota = config.teamQuotaBytes > 0 ? config.teamQuotaBytes : null
  const used = quota === null ? 0 : await teamUsage(db, teamId)
  if (quota !== null && used >= quota) throw quotaFull(used, quota)
  const declared = Number(req.headers['content-length'])
  if (Number.isFinite(declared) && declared > config.maxBytes + MULTIPART_SLACK) throw tooLarge(config.maxBytes)
  const room = quota === null ? Number.POSITIVE_INFINITY : quota - used
  const limit = Math.min(config.maxBytes, room)
  const overLimit = () => (limit === config.maxBytes ? tooLarge(config.maxBytes) : quotaFull(used, quota!))

  const store = useFileStore()
  const key = newStorageKey()
  let written = false
  try {
    const { fields, file } = await readMultipart(event, async (stream, filename, before) => {
      // fields sent ahead of the file are checked before a byte is stored
      await resolveAttachment(db, access.build.id, parseOr400(UploadFields, before))
      const meter = new Meter(limit, overLimit)
      // the store's promise carries the meter's errors (over the limit, a broken stream)
      meter.on('error', () => {})
      stream.on('error', err => meter.destroy(err))
      stream.pipe(meter)
      written = true
      try {
        await store.put(key, meter)
      }
      catch (err) {
        stream.unpipe(meter)
        stream.resume()
        // the limits and a client that went away come with their status; anything else is the store
        if (statusOf(err)) throw err
        console.error(`files: storing ${key} failed:`, err)
        throw createError({ statusCode: 503, message: 'The file can’t be stored right now; try again in a while' })
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
      const where = await resolveAttachment(trx, access.build.id, attach, true)
      const [inserted] = await trx('files').insert({
        build_id: access.build.id,
        revision_id: where.revisionId,
        reading_id: where.readingId,
        finding_id: where.findingId,
        storage_key: key,
        name,
        size: file.bytes,
        content_type: contentType,
        kind: kindOf(contentType),
        sha256: file.sha256,
        uploaded_by: access.user?.id ?? null,
        rig_token_id: access.rigTokenId,
      }).returning('*') as FileRow[]
      await audit(event, {
        action: 'file.uploaded',
        teamId,
        actorId: access.actorId,
        actorLabel: access.actorLabel,
        detail: { build: access.build.slug, file: inserted!.id, name, size: file.bytes, sha256: file.sha256 },
      }, trx)
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
 * A file and the caller's access to its build, for reading it. The caller is authenticated
 * before the file is looked up, and a file outside their teams is a 404 like a missing one.
 */
export async function fileForReader(event: H3Event, id: string, opts: { allowRigToken: boolean }): Promise<{ file: FileRow, access: BuildAccess }> {
  const bearer = opts.allowRigToken ? bearerToken(event) : null
  if (bearer) await useRigToken(event, bearer)
  else await requireUser(event)
  const file = await useDb()('files').where({ id }).first() as FileRow | undefined
  if (!file) throw fileNotFound()
  try {
    return { file, access: await requireBuildRole(event, file.build_id, 'reviewer', opts) }
  }
  catch (err) {
    throw statusOf(err) === 404 ? fileNotFound() : err
  }
}

const SANDBOX_POLICY = 'default-src \'none\'; img-src \'self\'; media-src \'self\'; style-src \'unsafe-inline\'; sandbox'

/**
 * Sends a stored file: ETag from its sha256 (If-None-Match → 304), Range → 206 or 416, a safe
 * Content-Disposition, nosniff, and markup never inline. The bytes stream from storage.
 */
export async function sendStoredFile(event: H3Event, file: FileRow) {
  const size = Number(file.size)
  const etag = `"${file.sha256}"`
  const res = event.node.res
  const rangeHeader = getRequestHeader(event, 'range')
  const ifRange = getRequestHeader(event, 'if-range')
  const range = ifRange && ifRange.trim() !== etag ? null : parseRange(rangeHeader, size)
  if (range === 'unsatisfiable') {
    setResponseHeader(event, 'Content-Range', `bytes */${size}`)
    throw createError({ statusCode: 416, message: `The range "${String(rangeHeader).slice(0, 60)}" is outside the file (${size} bytes)` })
  }
  const download = ['1', 'true'].includes(String(getQuery(event).download ?? ''))
  const delivery = deliveryOf(file.content_type, file.name, download)
  setResponseHeaders(event, {
    'ETag': etag,
    'Last-Modified': new Date(file.created_at).toUTCString(),
    'Cache-Control': 'private, no-cache',
    'Accept-Ranges': 'bytes',
    'X-Content-Type-Options': 'nosniff',
    'Cross-Origin-Resource-Policy': 'same-origin',
    'Content-Type': delivery.contentType,
    'Content-Disposition': contentDisposition(delivery.disposition, file.name),
    ...(delivery.sandbox ? { 'Content-Security-Policy': SANDBOX_POLICY } : {}),
  })
  if (etagMatches(getRequestHeader(event, 'if-none-match'), etag)) {
    res.statusCode = 304
    res.end()
    return
  }
  let body: Readable
  try {
    body = await useFileStore().get(file.storage_key, range ?? undefined)
  }
  catch (err) {
    console.error(`files: the bytes of ${file.id} (${file.storage_key}) can't be read:`, err)
    res.removeHeader('Content-Disposition')
    throw createError({ statusCode: 503, message: 'The file’s bytes can’t be read from storage right now' })
  }
  if (range) {
    res.statusCode = 206
    res.setHeader('Content-Range', `bytes ${range.start}-${range.end}/${size}`)
    res.setHeader('Content-Length', String(range.end - range.start + 1))
  }
  else {
    res.statusCode = 200
    res.setHeader('Content-Length', String(size))
  }
  if (event.method === 'HEAD') {
    body.destroy()
    res.end()
    return
  }
  // a client that goes away mid-download ends the pipeline; nothing to report
  await pipeline(body, res).catch(() => {})
}

/** DELETE /api/files/:id: its uploader or an Owner; the row goes, then the bytes. */
export async function deleteFile(event: H3Event, id: string) {
  const { file, access } = await fileForReader(event, id, { allowRigToken: false })
  const user = access.user!
  // the role is today's (read with this request): an uploader since made a Reviewer can't
  if (access.role !== 'owner' && (file.uploaded_by !== user.id || access.role !== 'engineer')) {
    throw createError({ statusCode: 403, message: 'Only the person who uploaded a file (while an Engineer), or an Owner, can delete it' })
  }
  const db = useDb()
  if (file.revision_id && access.role !== 'owner') {
    const rev = await db('revisions').where({ id: file.revision_id }).first('label', 'frozen_at')
    if (rev?.frozen_at) throw createError({ statusCode: 403, message: `Revision ${rev.label} is signed off: only an Owner can remove its evidence` })
  }
  await db.transaction(async (trx) => {
    const gone = await trx('files').where({ id }).delete().returning('id')
    if (gone.length === 0) throw fileNotFound()
    await audit(event, {
      action: 'file.deleted',
      teamId: access.build.team_id,
      actorId: user.id,
      actorLabel: user.email,
      detail: { build: access.build.slug, file: id, name: file.name, size: Number(file.size), sha256: file.sha256 },
    }, trx)
  })
  await useFileStore().remove(file.storage_key).catch((err) => {
    console.error(`files: could not remove the bytes of deleted file ${id} (the sweep will):`, err)
  })
}

interface ListedRow extends FileRow {
  uploader_name: string | null
  rig_name: string | null
  revision_label: string | null
  revision_frozen: Date | null
  reading_target: string | null
  reading_target_name: string | null
  reading_revision: string | null
  finding_title: string | null
}

function listQuery(db: Db, buildId: string) {
  return db('files as f')
    .leftJoin('users as u', 'u.id', 'f.uploaded_by')
    .leftJoin('rig_tokens as k', 'k.id', 'f.rig_token_id')
    .leftJoin('revisions as rv', 'rv.id', 'f.revision_id')
    .leftJoin('readings as rd', 'rd.id', 'f.reading_id')
    .leftJoin('targets as t', 't.id', 'rd.target_id')
    .leftJoin('revisions as rrv', 'rrv.id', 'rd.revision_id')
    .leftJoin('findings as fd', 'fd.id', 'f.finding_id')
    .where('f.build_id', buildId)
}

export function fileView(r: ListedRow, caller: { role: string, userId: string | null }): FileView {
  const delivery = deliveryOf(r.content_type, r.name)
  return {
    id: r.id,
    name: r.name,
    size: Number(r.size),
    sha256: r.sha256,
    contentType: r.content_type,
    kind: kindOf(r.content_type),
    inline: delivery.disposition === 'inline',
    url: `/api/v1/files/${r.id}`,
    createdAt: new Date(r.created_at).toISOString(),
    uploadedBy: r.uploader_name ?? (r.rig_name ? `rig token ${r.rig_name}` : null),
    revision: r.revision_label,
    reading: r.reading_id && r.reading_target
      ? { id: r.reading_id, target: r.reading_target, targetName: r.reading_target_name ?? r.reading_target, revision: r.reading_revision ?? '' }
      : null,
    finding: r.finding_id ? { id: r.finding_id, title: r.finding_title ?? '' } : null,
    canDelete: caller.role === 'owner' || (caller.userId !== null && r.uploaded_by === caller.userId && !r.revision_frozen),
  }
}

/** GET /api/builds/:build/files: newest first, filtered and paged. */
export async function listFiles(db: Db, access: BuildAccess, q: z.output<typeof FileListQuery>): Promise<FileList> {
  const filtered = () => {
    const query = listQuery(db, access.build.id)
    if (q.revision) query.whereRaw('lower(rv.label) = lower(?)', [q.revision])
    if (q.reading) query.where('f.reading_id', q.reading)
    if (q.finding) query.where('f.finding_id', q.finding)
    if (q.target) query.where('t.key', q.target)
    if (q.kind) query.where('f.kind', q.kind)
    if (q.q) query.whereRaw('f.name ILIKE ?', [`%${q.q.replace(/[\\%_]/g, c => `\\${c}`)}%`])
    return query
  }
  const [rows, count] = await Promise.all([
    filtered()
      .orderBy([{ column: 'f.created_at', order: 'desc' }, { column: 'f.id', order: 'desc' }])
      .limit(q.perPage).offset((q.page - 1) * q.perPage)
      .select('f.*', 'u.name as uploader_name', 'k.name as rig_name', 'rv.label as revision_label', 'rv.frozen_at as revision_frozen',
        't.key as reading_target', 't.name as reading_target_name', 'rrv.label as reading_revision', 'fd.title as finding_title') as Promise<ListedRow[]>,
    filtered().count({ n: '*' }).first() as Promise<{ n: number | string } | undefined>,
  ])
  const caller = { role: access.role, userId: access.user?.id ?? null }
  return { items: rows.map(r => fileView(r, caller)), total: Number(count?.n ?? 0), page: q.page, perPage: q.perPage }
}

/** GET /api/teams/:team/storage: bytes used per build against the team's quota. */
export async function storageUsage(db: Db, team: { id: string, slug: string, name: string }): Promise<StorageUsage> {
  const config = filesConfig()
  const builds = await db('builds as b').leftJoin('files as f', 'f.build_id', 'b.id').where('b.team_id', team.id)
    .groupBy('b.id', 'b.slug', 'b.name').orderBy('b.name')
    .select('b.slug', 'b.name', db.raw('coalesce(sum(f.size), 0)::bigint as used'), db.raw('count(f.id)::int as files')) as
    { slug: string, name: string, used: number | string, files: number }[]
  const used = builds.reduce((s, b) => s + Number(b.used), 0)
  return {
    team,
    usedBytes: used,
    quotaBytes: config.teamQuotaBytes > 0 ? config.teamQuotaBytes : null,
    files: builds.reduce((s, b) => s + b.files, 0),
    maxFileBytes: config.maxBytes,
    builds: builds.filter(b => b.files > 0).map(b => ({ slug: b.slug, name: b.name, usedBytes: Number(b.used), files: b.files })),
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
    }).returning('id') as { id: string }[]
    return row!.id
  }
  catch (err) {
    await store.remove(key).catch(() => {})
    throw err
  }
}
