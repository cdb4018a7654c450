// Response shapes of the findings, fixes and comments routes.

import type { FixState, Lane, Severity } from '../utils/lanes'
import type { Role } from '../utils/roles'

export interface FixView {
  id: string
  description: string
  state: FixState
  owner: { id: string, name: string } | null
  /** YYYY-MM-DD */
  dueOn: string | null
  /** the label of the revision the fix landed in */
  landedIn: string | null
}

/** One finding as API v1 lists it (GET /api/v1/builds/:build/findings). */
export interface FindingSummary {
  id: string
  title: string
  lane: Lane
  severity: Severity
  rank: string
  version: number
  /** the label of the revision it was seen on */
  seenOn: string | null
  /** keys of the targets it hurts */
  targets: string[]
  fixes: FixView[]
  createdAt: string
  updatedAt: string
}

/** What the board shows and filters on besides a finding's summary. */
export interface CardFacts {
  /** the Markdown source, for the text filter */
  description: string
  comments: number
  /** the revision whose readings would let it close now, or null */
  verifiedOn: string | null
  /** why it can't close yet (null when it can) */
  closeBlocker: string | null
}

/** A fix as a card shows it. */
export type CardFix = Pick<FixView, 'state' | 'owner' | 'dueOn' | 'landedIn'>

/**
 * A card of the board: the summary less what a card never shows (times, the fixes' texts), which
 * keeps a board of thousands light; a move's answer (a whole summary) merges into it.
 */
export interface FindingCard extends Omit<FindingSummary, 'fixes' | 'createdAt' | 'updatedAt'>, CardFacts {
  fixes: CardFix[]
}

export interface BoardMember { id: string, name: string }

export interface BoardTarget {
  key: string
  name: string
  quantity: string
  /** the number touches something that can hurt */
  caution: boolean
}

/** GET /api/v1/builds/:build/findings/board */
export interface BoardData {
  build: { id: string, slug: string, name: string }
  role: Role
  findings: FindingCard[]
  members: BoardMember[]
  targets: BoardTarget[]
  /** labels, oldest first */
  revisions: string[]
}

export interface CommentView {
  id: string
  /** the Markdown source */
  body: string
  /** rendered on the server and sanitized */
  html: string
  author: string | null
  mentions: BoardMember[]
  createdAt: string
}

export type FindingEventKind = 'created' | 'edited' | 'moved' | 'fix-added' | 'fix-edited'

export interface FindingEventView {
  id: number
  kind: FindingEventKind
  at: string
  actor: string
  detail: Record<string, unknown>
}

export interface FindingTargetInfo extends BoardTarget {
  unit: string
  status: 'met' | 'marginal' | 'short' | 'untested'
}

/** GET /api/v1/findings/:id */
export interface FindingDetail extends FindingSummary, CardFacts {
  descriptionHtml: string
  build: { id: string, slug: string, name: string }
  role: Role
  targetInfo: FindingTargetInfo[]
  verification: { revision: string | null, reason: string }
  commentList: CommentView[]
  history: FindingEventView[]
  members: BoardMember[]
  revisions: string[]
  /** the build's targets, for editing which ones it hurts */
  buildTargets: BoardTarget[]
  createdBy: string | null
  closedAt: string | null
  override: { reason: string, by: string | null } | null
}

/** GET /api/v1/builds/:build/findings/open: per target key, the open findings that hurt it. */
export interface OpenFindingsByTarget {
  /** the caller may file findings on this build */
  canFile: boolean
  byTarget: Record<string, { id: string, title: string, severity: Severity }[]>
}

/** GET /api/me/fixes */
export interface MyFix {
  id: string
  description: string
  state: FixState
  dueOn: string | null
  finding: { id: string, title: string, severity: Severity, lane: Lane }
  build: { slug: string, name: string }
}
