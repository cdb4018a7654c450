// Response shapes of the build, target, revision, reading and scoreboard routes. Numbers are in
// the target's display unit unless a name says otherwise.

import type { Hazard } from '../utils/caution'
import type { DesignCaution } from '../utils/designCautions'
import type { StatsInUnit } from '../utils/cellStats'
import type { Comparator, Movement, MovementResult, TargetStatus } from '../utils/conformance'
import type { ForecastView } from '../utils/forecast'
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
  /** evaluated from other targets' readings by `formula`; takes no readings of its own */
  derived: boolean
  formula: string | null
  /** a design model over the revisions' parameter keys predicting this target; null without one */
  model: string | null
}

/** One input's part in a derived value on one revision (GUM eq. 10 term by term). */
export interface BudgetTerm {
  key: string
  /** the input's mean and standard uncertainty, in its own display unit */
  mean: number
  u: number | null
  unit: string
  /** |∂f/∂x|·u(x), in the derived target's display unit */
  contribution: number | null
  /** this term's share of u_c² (0–1) */
  share: number | null
}

/** A revision on which a derived target has inputs but no value, and why. */
export interface CantEvaluate {
  revision: string
  reason: string
}

/** One revision's pooled statistics of one target, and what changed since the previous one. */
export interface HistoryEntry extends StatsInUnit {
  revision: string
  /** how many readings were pooled */
  readings: number
  /** how many of them are stated results (value ± u); 0: samples only */
  stated: number
  status: Exclude<TargetStatus, 'untested'>
  /** null on the first revision with a reading */
  delta: number | null
  p: number | null
  movement: Movement | null
  real: boolean | null
  reason: MovementResult['reason'] | null
  /** derived targets only (n and readings are then 0: no samples of their own) */
  budget?: BudgetTerm[]
}

export interface ScoreTarget extends TargetView {
  status: TargetStatus
  latest: HistoryEntry | null
  /** % from the threshold on the good side (conformance.marginOf), of the latest mean */
  margin: number | null
  history: HistoryEntry[]
  /** derived targets: revisions with inputs but no value (empty for measured targets) */
  cantEvaluate: CantEvaluate[]
  forecast: ForecastView
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

/** 'samples': values measured here; 'stated': one result with its own standard uncertainty */
export type ReadingKind = 'samples' | 'stated'

export interface ReadingStatsView extends StatsInUnit {
  id: string
  kind: ReadingKind
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
  kind: ReadingKind
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
  /** a stated result's standard uncertainty as entered (in unitEntered); null for samples */
  uEntered: number | null
  /** the same in the display unit */
  u: number | null
  /** a stated result's degrees of freedom; null: infinite, or a samples reading */
  dof: number | null
  takenAt: string
  by: string | null
  rig: boolean
  notes: string
  createdAt: string
}

/** A fix that landed in a revision (the findings board), as the target and revision pages list it. */
export interface FixLanded {
  id: string
  description: string
  revision: string
  finding: { id: string, title: string, severity: string, lane: string }
  /** keys of the targets the fix's finding hurts */
  targets: string[]
}

/** A revision as "what moved this target" lists it: its movement, changes and fixes. */
export interface Mover {
  revision: string
  parent: string | null
  summary: string
  changes: string[]
  fixes: FixLanded[]
  delta: number | null
  p: number | null
  movement: Movement | null
  real: boolean | null
  reason: MovementResult['reason'] | null
}

export interface TargetDetail {
  target: TargetView
  build: { id: string, slug: string, name: string }
  role: Role
  status: TargetStatus
  latest: HistoryEntry | null
  margin: number | null
  history: HistoryEntry[]
  cantEvaluate: CantEvaluate[]
  readings: ReadingDetail[]
  /** every revision of the build, oldest first (the chart's axis) */
  revisions: string[]
  forecast: ForecastView
  /** the revisions with a value, real movements first (by |delta|, then p) */
  movers: Mover[]
  /** a derived target's inputs */
  inputs: { key: string, name: string, unit: string, derived: boolean }[]
  /** cautions with numbers from the target and the latest revision's design parameters */
  cautions: DesignCaution[]
}

/** A design parameter as a revision sets it (shared/utils/design.ts). */
export interface ParameterView {
  key: string
  name: string
  value: number | string
  unit: string | null
  tolerance: number | null
}

export interface RevisionView extends RevisionBrief {
  changes: string[]
  /** the parameters this revision sets itself */
  parameters: ParameterView[]
  frozenBy: string | null
  readings: number
  targetsTested: number
  createdAt: string
}

export interface RevisionDetail extends RevisionView {
  /** the effective parameters: its own and those it inherits from its ancestors */
  parameters: (ParameterView & { inherited: boolean })[]
  build: { id: string, slug: string, name: string }
  role: Role
  targets: (TargetView & { stats: HistoryEntry | null, cantEvaluate: string | null, readings: ReadingDetail[] })[]
  /** what this revision moved against its parent; null without a parent */
  moved: Comparison | null
  fixesLanded: FixLanded[]
}

/** One side of a comparison: a revision's pooled cell (or derived value) of a target. */
export interface CompareSide extends StatsInUnit {
  readings: number
  status: Exclude<TargetStatus, 'untested'>
}

export interface ComparedTarget {
  target: TargetView
  a: CompareSide | null
  b: CompareSide | null
  /** b − a; null when a side has no value */
  delta: number | null
  p: number | null
  movement: Movement | null
  real: boolean | null
  reason: MovementResult['reason'] | null
  /** why there is no comparison, e.g. "R3 has no reading of this target" */
  note: string | null
}

/** One side of a parameter in a comparison: the revision's effective value. */
export interface ParameterSide { value: number | string, unit: string | null, tolerance: number | null, inherited: boolean }

export interface ParameterDiff {
  key: string
  name: string
  a: ParameterSide | null
  b: ParameterSide | null
  differs: boolean
}

/** GET /api/v1/builds/:build/compare?a=…&b=… (and a revision against its parent). */
export interface Comparison {
  build: { id: string, slug: string, name: string }
  a: RevisionView
  b: RevisionView
  /** every active target, in strip order (a revision's `moved`: real movements first) */
  targets: ComparedTarget[]
  parameters: ParameterDiff[]
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
  /** the team's id, as API v1 has always answered it; `team` carries its slug and name too */
  teamId: string
  team: { id: string, slug: string, name: string }
}

/** GET /api/teams/:team */
export interface TeamInfo {
  id: string
  name: string
  slug: string
  personal: boolean
  demo: boolean
  role: Role
}

/** GET /api/units */
export interface UnitOption {
  unit: string
  quantity: string
  quantityLabel: string
  label: string
  /** words a search finds the unit's quantity by, e.g. "spring rate" for stiffness */
  words: string
}

/** GET /api/units/check */
export interface UnitCheck {
  unit: string
  quantity: string
  quantityLabel: string
  label: string
  /** the SI unit of the quantity */
  si: string
  /** e.g. "1 lbf/in = 0.175127 N/mm"; null for the SI unit itself */
  conversion: string | null
}

/** A value with its standard uncertainty, in the target's display unit. */
export interface ValueWithU { value: number, u: number | null }

/** GET /api/v1/builds/:build/targets/:key/design */
export interface TargetDesign {
  target: TargetView
  model: string | null
  revisions: {
    revision: string
    predicted: { value: number, u: number } | null
    measured: { mean: number, u: number | null } | null
    ratio: ValueWithU | null
    /** why there is no prediction on this revision */
    cantPredict: string | null
  }[]
  /** nu: the factor's effective degrees of freedom (Welch–Satterthwaite); null when infinite */
  calibration: { factor: number, u: number | null, nu: number | null, revisions: string[], method: 'weighted' | 'plain' } | null
  /** the revision the sensitivity is taken on: the latest with a prediction */
  sensitivityRevision: string | null
  sensitivity: { parameter: string, elasticity: number | null, share: number }[]
}

/** POST /api/v1/builds/:build/targets/:key/solve */
export interface SolveResult {
  parameter: string
  value: number
  unit: string | null
  factor: number
  /** false when no revision has both a prediction and a measurement (factor 1) */
  calibrated: boolean
  revision: string
  margin: 'none' | '95'
  /** the calibrated prediction at `value`, in the target's display unit */
  predicted: number
  u: number
  /** the value it meets: the threshold, or the band's middle */
  goal: number
}

/** GET /api/v1/builds/:build/targets/:key/plan */
export interface SamplePlan {
  samplesNeeded: number | null
  reason: string
  revision: string
}
