import type { Knex } from 'knex'
import type { EventRow } from '../../db/tables'
import type { Db } from '../db'

// Events of a build, e-mailed to those who follow it (digests.ts). Plain imports (no
// auto-imports): the seed and the benchmark use these outside the server.

let afterCommit: () => void = () => {}

/** The queue plugin sets what happens once an event's transaction commits (a nudge to deliver). */
export function onEventsCommitted(fn: () => void) {
  afterCommit = fn
}

export type EventType = EventRow['type']

export interface NewEvent {
  buildId: string
  type: EventType
  targetId?: string | null
  revisionId?: string | null
  findingId?: string | null
  before?: Record<string, unknown> | null
  after?: Record<string, unknown> | null
  detail?: Record<string, unknown>
}

/**
 * Records an event in the caller's transaction; once that transaction commits, the queue is
 * asked to deliver it (a sweep every minute catches any nudge that was lost).
 */
export async function recordEvent(trx: Db, e: NewEvent) {
  const row: Record<string, unknown> = {
    build_id: e.buildId,
    type: e.type,
    target_id: e.targetId ?? null,
    revision_id: e.revisionId ?? null,
    before: e.before ? JSON.stringify(e.before) : null,
    after: e.after ? JSON.stringify(e.after) : null,
    detail: JSON.stringify(e.detail ?? {}),
  }
  if (e.findingId) row.finding_id = e.findingId
  await trx('events').insert(row)
  const done = (trx as Knex.Transaction).executionPromise
  if (done) done.then(() => afterCommit(), () => {})
  else afterCommit()
}
