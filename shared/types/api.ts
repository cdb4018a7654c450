// Response shapes of the build, target, revision, reading and scoreboard routes. Numbers are in
// the target's display unit unless a name says otherwise.

import type { Hazard } from '../utils/caution'
import type { StatsInUnit } from '../utils/cellStats'
import type { Comparator, Movement, MovementResult, TargetStatus } from '../utils/conformance'
import type { Quantity } from '../utils/units'
import type { Role } from '../utils/roles'

export interface TargetView {
  id: string
  key: string
  name: string
  unit: string
  quantity: Quantity
  quantityLabel: string
  comparator: Comparator
  threshold: number
  thresholdHigh: number | null
  stretch: number | null
  noiseBand: number | null
  notes: string
  position: number
  archived: boolean
  /** the number touches something that can hurt: show the usual caution */
  caution: boolean
  hazard: Hazard | null
}

/** One revision's pooled statistics of one target, and what changed since the previous one. */
export interface HistoryEntry extends StatsInUnit {
  revision: string
  /** how many readings were pooled */
  readings: number
  status: Exclude<TargetStatus, 'untested'>
  /** null on the first revision with a reading */
  delta: number | null
  p: number | null
  movement: Movement | null
  real: boolean | null
  reason: MovementResult['reason'] | null
}

export interface ScoreTarget extends TargetView {
  status: TargetStatus
  latest: HistoryEntry | null
  /** % from the threshold on the good side (conformance.marginOf), of the latest mean */
  margin: number | null
  history: HistoryEntry[]
}

export interface RevisionBrief {
  id: string
  label: string
  seq: number
  parent: string | null
  builtOn: string | null
  summary: string
  frozen: boolean
  frozenAt: string | null
}

export interface Scoreboard {
  build: { id: string, slug: string, name: string, summary: string, archived: boolean, teamId: string }
  /** every revision's label, oldest first */
  revisions: string[]
  /** the same revisions with their details, in the same order */
  revisionInfo: RevisionBrief[]
  targets: ScoreTarget[]
}

export interface ReadingStatsView extends StatsInUnit {
  id: string
  unit: string
  status: Exclude<TargetStatus, 'untested'>
}

/** POST /api/v1/builds/:build/readings */
export interface ReadingCreated {
  reading: ReadingStatsView
  /** the cell's pooled statistics when the revision holds other readings of the target */
  pooled: (StatsInUnit & { readings: number, status: Exclude<TargetStatus, 'untested'> }) | null
}

export interface ReadingDetail {
  id: string
  revision: string
  n: number
  /** statistics of this reading alone, in the display unit */
  stats: StatsInUnit
  status: Exclude<TargetStatus, 'untested'>
  unitEntered: string
  valuesEntered: number[]
  /** the same samples in the target's display unit */
  values: number[]
  method: string
  resolutionEntered: number | null
  /** in the display unit */
  resolution: number | null
  takenAt: string
  by: string | null
  rig: boolean
  notes: string
  createdAt: string
}

export interface TargetDetail {
  target: TargetView
  build: { id: string, slug: string, name: string }
  role: Role
  status: TargetStatus
  latest: HistoryEntry | null
  margin: number | null
  history: HistoryEntry[]
  readings: ReadingDetail[]
}

export interface RevisionView extends RevisionBrief {
  changes: string[]
  parameters: { name: string, value: number | string, unit: string | null }[]
  frozenBy: string | null
  readings: number
  targetsTested: number
  createdAt: string
}

export interface RevisionDetail extends RevisionView {
  build: { id: string, slug: string, name: string }
  role: Role
  targets: (TargetView & { stats: HistoryEntry | null, readings: ReadingDetail[] })[]
}

export interface BuildHealth {
  id: string
  name: string
  slug: string
  summary: string
  archived: boolean
  createdAt: string
  targetsMet: number
  targetsTotal: number
  lastRevision: string | null
  openFindings: number
}

export interface BuildDetail {
  id: string
  name: string
  slug: string
  summary: string
  archived: boolean
  archivedAt: string | null
  createdAt: string
  role: Role
  team: { id: string, slug: string, name: string }
}
