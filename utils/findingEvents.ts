import type { FindingEventView } from '#shared/types/findings'
import { LANE_LABELS, SEVERITY_LABELS, type Lane, type Severity } from '#shared/utils/lanes'

type Change = { from?: unknown, to?: unknown, edited?: boolean, added?: string[], removed?: string[] }

const FIELD_NAMES: Record<string, string> = { title: 'title', description: 'description', severity: 'severity', seenOn: 'seen on', targets: 'targets', owner: 'owner', dueOn: 'due date', state: 'state', landedIn: 'landed in' }

function shown(field: string, v: unknown): string {
  if (v === null || v === undefined || v === '') return 'none'
  if (field === 'severity') return SEVERITY_LABELS[v as Severity] ?? String(v)
  return String(v)
}

function changesText(changes: Record<string, Change>): string {
  return Object.entries(changes).map(([field, c]) => {
    const name = FIELD_NAMES[field] ?? field
    if (c.edited) return `edited the ${name}`
    if (c.added || c.removed) {
      const parts = [c.added?.length ? `added ${c.added.join(', ')}` : '', c.removed?.length ? `removed ${c.removed.join(', ')}` : ''].filter(Boolean)
      return `${name}: ${parts.join('; ')}`
    }
    return `${name} ${shown(field, c.from)} → ${shown(field, c.to)}`
  }).join('; ')
}

/** One entry of a finding's history in words: what its actor did. */
export function describeFindingEvent(e: Pick<FindingEventView, 'kind' | 'detail'>): string {
  const d = e.detail as Record<string, unknown>
  switch (e.kind) {
    case 'created': return `filed it as ${SEVERITY_LABELS[d.severity as Severity] ?? d.severity}${d.seenOn ? `, seen on ${d.seenOn}` : ''}`
    case 'moved': {
      const text = `moved it from ${LANE_LABELS[d.from as Lane]} to ${LANE_LABELS[d.to as Lane]}`
      if (d.verifiedBy) return `${text}, verified by the readings of ${d.verifiedBy}`
      return text
    }
    case 'edited': return changesText(d as Record<string, Change>)
    case 'fix-added': return `added the fix “${d.description}”${d.owner ? ` for ${d.owner}` : ''}${d.landedIn ? `, landed in ${d.landedIn}` : ''}`
    case 'fix-edited': return `changed the fix “${d.description}”: ${changesText((d.changes ?? {}) as Record<string, Change>)}`
    default: return 'changed it'
  }
}
