import type { H3Event } from 'h3'
import type { Knex } from 'knex'

export interface AuditEntry {
  action: string
  teamId?: string | null
  actorId?: string | null
  actorLabel?: string
  detail?: Record<string, unknown>
}

/** The audit_log row of `entry`, from where the request came. */
export function auditRow(event: H3Event, entry: AuditEntry) {
  return {
    action: entry.action,
    team_id: entry.teamId ?? null,
    actor_id: entry.actorId ?? null,
    actor_label: entry.actorLabel ?? '',
    detail: JSON.stringify(entry.detail ?? {}),
    ip: clientIp(event),
    user_agent: (getRequestHeader(event, 'user-agent') ?? '').slice(0, 300),
  }
}

/** Records who did what, when and from where. Pass the transaction when there is one. */
export async function audit(event: H3Event, entry: AuditEntry, db: Knex | Knex.Transaction = useDb()) {
  await db('audit_log').insert(auditRow(event, entry))
}
