// The findings board: its lanes, severities and fix states, and the rules a move into a lane must
// pass. Pure; the server enforces the rules and the board explains them before a move is tried.

export const LANES = ['spotted', 'traced', 'bench', 'retest', 'closed', 'parked'] as const
export type Lane = typeof LANES[number]

export const LANE_LABELS: Record<Lane, string> = {
  spotted: 'Spotted',
  traced: 'Traced',
  bench: 'On the bench',
  retest: 'Retest',
  closed: 'Closed',
  parked: 'Parked',
}

export const LANE_HINTS: Record<Lane, string> = {
  spotted: 'Seen in testing; the cause is not known yet',
  traced: 'The root cause is known',
  bench: 'A fix is being made',
  retest: 'A fix has landed; waiting for a reading that shows it worked',
  closed: 'A later reading confirms the fix',
  parked: 'Deferred, or won’t be fixed',
}

/** Lanes whose findings still need work; Closed and Parked ones don't count as open. */
export const OPEN_LANES: readonly Lane[] = ['spotted', 'traced', 'bench', 'retest']

export function isOpenLane(lane: Lane): boolean {
  return OPEN_LANES.includes(lane)
}

/** The lane `dir` steps along the board's order (Parked last), or null past either end. */
export function neighbourLane(lane: Lane, dir: -1 | 1): Lane | null {
  return LANES[LANES.indexOf(lane) + dir] ?? null
}

export const SEVERITIES = ['safety', 'blocks-target', 'degrades', 'cosmetic'] as const
export type Severity = typeof SEVERITIES[number]

export const SEVERITY_LABELS: Record<Severity, string> = {
  'safety': 'Safety',
  'blocks-target': 'Blocks a target',
  'degrades': 'Degrades',
  'cosmetic': 'Cosmetic',
}

export const SEVERITY_HINTS: Record<Severity, string> = {
  'safety': 'Can hurt someone or damage equipment',
  'blocks-target': 'Keeps a target from being met',
  'degrades': 'Makes the build worse without blocking a target',
  'cosmetic': 'Looks or feel only',
}

export const FIX_STATES = ['planned', 'in-progress', 'landed', 'dropped'] as const
export type FixState = typeof FIX_STATES[number]

export const FIX_STATE_LABELS: Record<FixState, string> = {
  'planned': 'Planned',
  'in-progress': 'In progress',
  'landed': 'Landed',
  'dropped': 'Dropped',
}

/** Fix states that still need their owner. */
export const OPEN_FIX_STATES: readonly FixState[] = ['planned', 'in-progress']

/**
 * A lane's cards in display order: safety findings first, then by rank (byte order, as the
 * database sorts). Returns a new array.
 */
export function boardOrder<T extends { severity: Severity, rank: string }>(cards: readonly T[]): T[] {
  return [...cards].sort((a, b) => {
    const sa = a.severity === 'safety' ? 0 : 1
    const sb = b.severity === 'safety' ? 0 : 1
    if (sa !== sb) return sa - sb
    return a.rank < b.rank ? -1 : a.rank > b.rank ? 1 : 0
  })
}

// ---- verification: what lets a finding close -------------------------------------------------

export type CellStatus = 'met' | 'marginal' | 'short'

const STATUS_WORD: Record<CellStatus, string> = { met: 'Met', marginal: 'Marginal', short: 'Short' }

export interface VerificationFacts {
  /** the revision the finding was seen on, or null when nobody said */
  seenOn: { seq: number, label: string } | null
  /** revisions the finding's fixes landed in */
  landedIn: { seq: number, label: string }[]
  /** targets the finding hurts */
  targets: { id: string, key: string }[]
  /** the build's revisions that hold at least one reading, oldest first, with each tested target's status */
  revisions: { seq: number, label: string, cells: Record<string, CellStatus> }[]
}

export interface Verification {
  /** the revision whose readings verify the finding, or null when none does */
  revision: { seq: number, label: string } | null
  /** what is missing when `revision` is null; what verified it otherwise */
  reason: string
}

/**
 * The latest revision that verifies a finding: later than the revision it was seen on, not
 * before the revision a fix landed in, holding a reading, and with every target the finding
 * hurts Met there.
 */
export function verificationOf(f: VerificationFacts): Verification {
  const landed = f.landedIn.reduce<{ seq: number, label: string } | null>((m, r) => (m === null || r.seq > m.seq ? r : m), null)
  const after = f.seenOn?.seq ?? Number.NEGATIVE_INFINITY
  const from = landed?.seq ?? Number.NEGATIVE_INFINITY
  const candidates = f.revisions.filter(r => r.seq > after && r.seq >= from && Object.keys(r.cells).length > 0)
  const scope = () => {
    const where = [f.seenOn ? `after ${f.seenOn.label} (where it was seen)` : '', landed ? `from ${landed.label} on (where its fix landed)` : '']
      .filter(Boolean).join(' and ')
    return where ? ` ${where}` : ''
  }
  if (!candidates.length) {
    return { revision: null, reason: `Closing needs a reading on a revision${scope()}; there is none yet` }
  }
  if (!f.targets.length) {
    const r = candidates[candidates.length - 1]!
    return { revision: { seq: r.seq, label: r.label }, reason: `${r.label} has readings${scope()}` }
  }
  for (let i = candidates.length - 1; i >= 0; i--) {
    const r = candidates[i]!
    if (f.targets.every(t => r.cells[t.id] === 'met')) {
      return { revision: { seq: r.seq, label: r.label }, reason: `${f.targets.map(t => t.key).join(', ')} Met on ${r.label}` }
    }
  }
  const latest = candidates[candidates.length - 1]!
  const missing = f.targets.filter(t => latest.cells[t.id] !== 'met')
    .map(t => `${t.key} ${latest.cells[t.id] ? STATUS_WORD[latest.cells[t.id]!] : 'not measured'}`)
  const needs = f.targets.length === 1 ? `${f.targets[0]!.key} Met` : `each of ${f.targets.map(t => t.key).join(', ')} Met`
  return { revision: null, reason: `Closing needs ${needs} on one revision${scope()}; on ${latest.label}: ${missing.join(', ')}` }
}

export interface LaneFacts {
  /** fixes that landed in a revision */
  landedFixes: number
  verification: Verification
}

/** Why a move into `to` is refused, or null when the rules let it in. Leaving a lane is always allowed. */
export function laneRefusal(to: Lane, facts: LaneFacts): string | null {
  if (to === 'retest' && facts.landedFixes === 0) {
    return 'Retest needs a landed fix: record the revision a fix landed in first'
  }
  if (to === 'closed' && !facts.verification.revision) return facts.verification.reason
  return null
}

/** Lanes whose rule an Owner may override, with a reason kept in the history. */
export const OVERRIDABLE: readonly Lane[] = ['retest', 'closed']
