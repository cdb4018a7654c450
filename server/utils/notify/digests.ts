import type { Db } from '../db'
import type { PoolClient } from 'pg'
import { digestEmail, type DigestEvent, type DigestInput } from '~~/email/digest'
import type { RenderedEmail } from '~~/email/layout'

export type Frequency = 'immediate' | 'daily' | 'weekly' | 'off'
export const FREQUENCIES: Frequency[] = ['immediate', 'daily', 'weekly', 'off']

/** Reviewers follow a build daily unless they chose otherwise; everyone else opts in. */
export const EFFECTIVE_FREQUENCY = `coalesce(s.frequency, case when m.role = 'reviewer' then 'daily' else 'off' end)`

/** Members of the build's team with their effective frequency (a removed member is not here). */
export function subscribersQuery(db: Db, buildId: string) {
  return db('builds as b')
    .join('memberships as m', 'm.team_id', 'b.team_id')
    .join('users as u', 'u.id', 'm.user_id')
    .leftJoin('subscriptions as s', function () {
      this.on('s.user_id', 'm.user_id').andOn('s.build_id', 'b.id')
    })
    .where('b.id', buildId)
    .select('u.id as userId', 'u.name', 'u.email', 'm.role', db.raw(`${EFFECTIVE_FREQUENCY} as frequency`), db.raw('coalesce(s.digested_through, 0) as "digestedThrough"'))
}

export async function subscriptionOf(db: Db, userId: string, buildId: string) {
  const row = await subscribersQuery(db, buildId).where('m.user_id', userId).first()
  return row as { userId: string, name: string, email: string, role: string, frequency: Frequency, digestedThrough: number } | undefined
}

export async function setSubscription(db: Db, userId: string, buildId: string, frequency: Frequency) {
  await db('subscriptions').insert({ user_id: userId, build_id: buildId, frequency })
    .onConflict(['user_id', 'build_id']).merge({ frequency, updated_at: db.fn.now() })
}

/** Events of a build with what an e-mail or the feed shows of them, newest first. */
export async function loadEvents(db: Db, buildId: string, opts: { afterId?: number, ids?: number[], limit?: number } = {}): Promise<DigestEvent[]> {
  const q = db('events as e')
    .leftJoin('targets as t', 't.id', 'e.target_id')
    .leftJoin('revisions as r', 'r.id', 'e.revision_id')
    .leftJoin('findings as f', 'f.id', 'e.finding_id')
    .where('e.build_id', buildId)
    .orderBy('e.id', 'desc')
    .limit(opts.limit ?? 200)
    .select('e.id', 'e.type', 'e.at', 'e.before', 'e.after', 'e.detail', 't.key as targetKey', 't.name as targetName',
      'r.label as revisionLabel', 'r.changes as revisionChanges', 'f.id as findingId', 'f.title as findingTitle')
  if (opts.afterId !== undefined) q.where('e.id', '>', opts.afterId)
  if (opts.ids) q.whereIn('e.id', opts.ids)
  const rows = await q
  return rows.map(r => ({
    id: Number(r.id),
    type: r.type,
    at: new Date(r.at).toISOString(),
    target: r.targetKey ? { key: r.targetKey, name: r.targetName } : null,
    revision: r.revisionLabel ? { label: r.revisionLabel, changes: r.revisionChanges ?? [] } : null,
    finding: r.findingId ? { id: r.findingId, title: r.findingTitle } : null,
    before: r.before,
    after: r.after,
    detail: r.detail ?? {},
  }))
}

export function renderDigest(p: { build: { id: string, name: string, slug: string }, recipient: { id: string, name: string }, events: DigestEvent[], period: DigestInput['period'] }) {
  const message = digestEmail({
    build: p.build,
    recipientName: p.recipient.name,
    events: p.events,
    period: p.period,
    links: {
      build: appLink(`/builds/${p.build.slug}`),
      settings: appLink('/digests'),
      unsubscribe: appLink(`/unsubscribe?${unsubscribeQuery(p.recipient.id, p.build.id)}`),
      app: appLink,
    },
  })
  const headers = {
    'List-Unsubscribe': `<${appLink(`/api/unsubscribe?${unsubscribeQuery(p.recipient.id, p.build.id)}`)}>`,
    'List-Unsubscribe-Post': 'List-Unsubscribe=One-Click',
  }
  return { ...message, headers }
}

/**
 * Sends one e-mail at most once per (person, key): the delivery row is claimed first; a failed
 * send gives the claim back and throws, so the queue retries it later with backoff.
 */
export async function sendOnce(p: { userId: string, buildId: string, key: string, eventIds: number[], to: string, message: RenderedEmail & { headers?: Record<string, string> } }) {
  const db = useDb()
  const claimed = await db('deliveries')
    .insert({ user_id: p.userId, build_id: p.buildId, key: p.key, status: 'sending', event_ids: p.eventIds })
    .onConflict(['user_id', 'key']).ignore().returning('id')
  const claim = claimed[0]
  if (!claim) return false
  try {
    await sendMail({ to: p.to, ...p.message })
  }
  catch (err) {
    await db('deliveries').where({ id: claim.id }).delete()
    throw err
  }
  await db('deliveries').where({ id: claim.id }).update({ status: 'sent', sent_at: db.fn.now() })
  return true
}

async function buildOf(db: Db, buildId: string) {
  return await db('builds').where({ id: buildId }).first('id', 'name', 'slug')
}

/** One immediate e-mail about one event, if the person still follows the build immediately. */
export async function deliverEvent(job: { userId: string, eventId: number }) {
  const db = useDb()
  const ev = await db('events').where({ id: job.eventId }).first('build_id')
  if (!ev) return
  const sub = await subscriptionOf(db, job.userId, ev.build_id)
  if (!sub || sub.frequency !== 'immediate') return
  const build = await buildOf(db, ev.build_id)
  const events = await loadEvents(db, ev.build_id, { ids: [job.eventId] })
  if (!build || !events.length) return
  await sendOnce({
    userId: sub.userId,
    buildId: build.id,
    key: `event:${job.eventId}`,
    eventIds: [job.eventId],
    to: sub.email,
    message: renderDigest({ build, recipient: { id: sub.userId, name: sub.name }, events, period: 'immediate' }),
  })
}

/** One digest of every event since the person's last digest of this build. */
export async function deliverDigest(job: { userId: string, buildId: string, period: 'daily' | 'weekly' | 'now' }) {
  const db = useDb()
  const sub = await subscriptionOf(db, job.userId, job.buildId)
  if (!sub || sub.frequency === 'off' || sub.frequency === 'immediate') return
  if (job.period !== 'now' && sub.frequency !== job.period) return
  const build = await buildOf(db, job.buildId)
  const events = (await loadEvents(db, job.buildId, { afterId: Number(sub.digestedThrough) })).reverse()
  if (!build || !events.length) return
  const first = events[0]!.id
  const last = events.at(-1)!.id
  // sent now, or already sent by another worker: either way these events are digested
  await sendOnce({
    userId: sub.userId,
    buildId: build.id,
    key: `digest:${build.id}:${first}-${last}`,
    eventIds: events.map(e => e.id),
    to: sub.email,
    message: renderDigest({ build, recipient: { id: sub.userId, name: sub.name }, events, period: job.period === 'now' ? (sub.frequency as 'daily' | 'weekly') : job.period }),
  })
  await db('subscriptions').insert({ user_id: sub.userId, build_id: build.id, frequency: sub.frequency, digested_through: last })
    .onConflict(['user_id', 'build_id']).merge({ digested_through: db.raw('greatest(subscriptions.digested_through, excluded.digested_through)'), updated_at: db.fn.now() })
}

/** Queues a digest for every person who follows a build (or every build) at `period`. */
export async function queueDigests(period: 'daily' | 'weekly' | 'now', buildId?: string) {
  const db = useDb()
  const boss = await useQueue()
  const builds = buildId ? [buildId] : await db('builds').whereNull('archived_at').pluck('id')
  let queued = 0
  for (const id of builds) {
    const subs = await subscribersQuery(db, id)
    for (const s of subs) {
      const wanted = period === 'now' ? ['daily', 'weekly'].includes(s.frequency) : s.frequency === period
      if (!wanted) continue
      await boss.send(QUEUES.digest, { userId: s.userId, buildId: id, period })
      queued++
    }
  }
  return queued
}

/**
 * Turns events that are not fanned out yet into one delivery job per immediate subscriber, in
 * one transaction with the jobs themselves, so an event is fanned out once even with several
 * app servers (the rows are locked with SKIP LOCKED).
 */
export async function fanout() {
  const boss = await useQueue()
  const client: PoolClient = await queuePool().connect()
  try {
    await client.query('BEGIN')
    const { rows: events } = await client.query<{ id: string, build_id: string }>(
      'SELECT id, build_id FROM events WHERE fanned_out_at IS NULL ORDER BY id LIMIT 200 FOR UPDATE SKIP LOCKED')
    const db = { executeSql: (text: string, values: unknown[]) => client.query(text, values) }
    for (const e of events) {
      const subs = await subscribersQuery(useDb(), e.build_id)
      for (const s of subs.filter(s => s.frequency === 'immediate')) {
        await boss.send(QUEUES.deliver, { userId: s.userId, eventId: Number(e.id) }, { db })
      }
    }
    if (events.length) await client.query('UPDATE events SET fanned_out_at = now() WHERE id = ANY($1::bigint[])', [events.map(e => e.id)])
    await client.query('COMMIT')
    return events.length
  }
  catch (err) {
    await client.query('ROLLBACK').catch(() => {})
    throw err
  }
  finally {
    client.release()
  }
}
