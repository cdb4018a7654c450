import { createError } from 'h3'
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { FileList, FileView, StorageUsage } from '#shared/types/files'
import { deliveryOf, kindOf } from '#shared/utils/contentTypes'
import type { FileListQuery } from '#shared/utils/fileSchemas'
import type { FileRow } from '../../db/tables'
import { recordAudit, type Actor } from '../audit'
import type { Db } from '../db'
import { filesConfig, useFileStore } from './storage'

// Evidence files listed, counted against the team's quota, and deleted.

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

export function fileView(r: ListedRow, caller: { role: string | null, userId: string | null }): FileView {
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
export async function listFiles(db: Db, actor: Actor, input: { buildId: string, query: z.output<typeof FileListQuery> }): Promise<FileList> {
  const q = input.query
  const filtered = () => {
    const query = listQuery(db, input.buildId)
    if (q.id) query.where('f.id', q.id)
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
  const caller = { role: actor.role, userId: actor.userId }
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
 * DELETE /api/files/:id (the handler checked that the caller may): the row goes, then the bytes.
 */
export async function deleteFile(db: Db, actor: Actor, input: { build: { team_id: string, slug: string }, file: FileRow }) {
  const { build, file } = input
  await (db as Knex).transaction(async (trx) => {
    const gone = await trx('files').where({ id: file.id }).delete().returning('id')
    if (gone.length === 0) throw createError({ statusCode: 404, message: 'File not found' })
    await recordAudit(trx, actor, {
      action: 'file.deleted',
      teamId: build.team_id,
      detail: { build: build.slug, file: file.id, name: file.name, size: Number(file.size), sha256: file.sha256 },
    })
  })
  await useFileStore().remove(file.storage_key).catch((err) => {
    console.error(`files: could not remove the bytes of deleted file ${file.id} (the sweep will):`, err)
  })
}
