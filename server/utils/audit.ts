import type { H3Event } from 'h3'
import type { Role } from '#shared/utils/roles'
import type { Db } from './db'

// Who acts and the audit log. Domain functions get an Actor (never the request); handlers make
// one from the request with requireBuildRole / requireTeamRole (their `actor`) or requestActor.

/** Where a request came from, as the audit log keeps it. */
export interface Origin {
  ip: string
  userAgent: string
}

/**
 * Who acts: a person or a rig token (API v1), their role where they act, and where the request
 * came from. Seeds and scripts write one of their own (origin `{ ip: 'seed', userAgent: '' }`).
 */
export interface Actor {
  /** null when a rig token acts */
  userId: string | null
  rigTokenId: string | null
  /** a name for histories: the person's name, or "rig token NAME" */
  name: string
  /** for the audit log: the person's e-mail, or "rig token NAME" */
  label: string
  /** the role where they act; null where they have none yet (accepting an invitation) */
  role: Role | null
  origin: Origin
}

export interface AuditEntry {
  action: string
  teamId?: string | null
  actorId?: string | null
  actorLabel?: string
  detail?: Record<string, unknown>
}

/** Where the request came from (X-Forwarded-For only behind a proxy the app is told of). */
export function originOf(event: H3Event): Origin {
  return { ip: clientIp(event), userAgent: (getRequestHeader(event, 'user-agent') ?? '').slice(0, 300) }
}

/** The audit_log row of `entry`, from `origin`. */
export function auditRow(origin: Origin, entry: AuditEntry) {
  return {
    action: entry.action,
    team_id: entry.teamId ?? null,
    actor_id: entry.actorId ?? null,
    actor_label: entry.actorLabel ?? '',
    detail: JSON.stringify(entry.detail ?? {}),
    ip: origin.ip,
    user_agent: origin.userAgent,
  }
}

/** Records what `actor` did (domain functions). Pass the transaction when there is one. */
export async function recordAudit(db: Db, actor: Actor, entry: Omit<AuditEntry, 'actorId' | 'actorLabel'>) {
  await db('audit_log').insert(auditRow(actor.origin, { ...entry, actorId: actor.userId, actorLabel: actor.label }))
}

/** Records who did what, when and from where (handlers). Pass the transaction when there is one. */
export async function audit(event: H3Event, entry: AuditEntry, db: Db = useDb()) {
  await db('audit_log').insert(auditRow(originOf(event), entry))
}
