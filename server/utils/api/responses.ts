import { z } from 'zod'
import type { CsvImported, CsvPreview, FileCreated, FileList } from '#shared/types/files'
import type { BoardData, CommentView, FindingDetail, FindingSummary, FixView, OpenFindingsByTarget } from '#shared/types/findings'
import type {
  Comparison, HistoryEntry, ReadingCreated, RevisionDetail, RevisionView, SamplePlan, Scoreboard, SolveResult, TargetDesign, TargetDetail, TargetView,
} from '#shared/types/api'
import type { ForecastView } from '#shared/utils/forecast'
import { FILE_KINDS } from '#shared/utils/contentTypes'
import type { buildView } from '../measure/scoreboard'
import { FREQUENCY_VALUES } from '#shared/utils/digestSchemas'
import { FIX_STATES, LANES, SEVERITIES } from '#shared/utils/lanes'
import { ROLES } from '#shared/utils/roles'
import { COMPARATORS } from '#shared/utils/targetSchemas'

// The answers of the documented routes, as zod schemas so the API document is generated from
// them (server/utils/api/document.ts). The checks at the bottom keep each one the same shape as
// the TypeScript type the route returns: change one and typecheck names the other.

const described = <T extends z.ZodType>(schema: T, description: string) => schema.meta({ description })
const nullableNumber = (description?: string) => (description ? described(z.number().nullable(), description) : z.number().nullable())

export const ApiError = z.object({
  statusCode: z.int(),
  message: described(z.string(), 'what went wrong, in words a person can act on'),
  data: z.object({
    fields: described(z.record(z.string(), z.string()), 'the first problem of each field, by its path (e.g. "values.2")'),
  }).partial().optional(),
})

const statsShape = {
  n: described(z.int(), 'number of samples'),
  mean: z.number(),
  sd: nullableNumber('sample standard deviation (n − 1); null when n = 1'),
  uA: nullableNumber('Type A standard uncertainty sd/√n'),
  uB: nullableNumber('Type B standard uncertainty from the resolution, δ/√12'),
  u: nullableNumber('combined standard uncertainty √(uA² + uB²)'),
  nuEff: nullableNumber('Welch–Satterthwaite effective degrees of freedom; null when infinite or absent'),
  ci95: described(z.tuple([z.number(), z.number()]).nullable(), '95 % interval [low, high]; null with one sample and no resolution'),
}

const measuredStatus = z.enum(['met', 'marginal', 'short'])
const targetStatus = z.enum(['met', 'marginal', 'short', 'untested'])
const movementReason = z.enum(['welch', 'noise-band', 'uncertainty', 'not-enough-data'])
const movementShape = {
  delta: nullableNumber('mean − the other revision’s mean; null when a side has no value'),
  p: nullableNumber('two-sided p of Welch’s test, when both sides have n ≥ 2 (or either holds a stated result: the test on both sides’ u and ν_eff)'),
  movement: z.enum(['gained', 'slipped', 'steady']).nullable(),
  real: z.boolean().nullable(),
  reason: described(movementReason.nullable(), 'the rule that decided'),
}
const BuildRef = z.object({ id: z.string(), slug: z.string(), name: z.string() })
const role = described(z.enum(ROLES), 'the caller’s role in the build’s team')

export const TeamOut = z.object({ id: z.string(), name: z.string(), slug: z.string(), role: z.enum(ROLES) })

export const BuildOut = z.object({
  id: z.string(),
  name: z.string(),
  slug: z.string(),
  summary: z.string(),
  createdAt: z.string().optional(),
  teamId: z.string(),
  teamSlug: z.string().optional(),
  teamName: z.string().optional(),
  archived: z.boolean().optional(),
  role: described(z.enum(ROLES).optional(), 'the caller’s role in the build’s team (absent for a rig token)'),
})

export const TargetOut = z.object({
  id: z.string(),
  key: z.string(),
  name: z.string(),
  unit: described(z.string(), 'the display unit'),
  quantity: described(z.string(), 'a named quantity (torque, stiffness, resistance …) or dim: and its SI base units'),
  quantityLabel: z.string(),
  comparator: z.enum(COMPARATORS),
  threshold: z.number(),
  thresholdHigh: z.number().nullable(),
  stretch: z.number().nullable(),
  noiseBand: z.number().nullable(),
  notes: z.string(),
  position: z.int(),
  archived: z.boolean(),
  caution: described(z.boolean(), 'the number touches something that can hurt (current, voltage, heat, spinning parts)'),
  hazard: z.enum(['electrical', 'thermal', 'mechanical']).nullable(),
  derived: described(z.boolean(), 'evaluated from other targets by `formula`; takes no readings of its own'),
  formula: z.string().nullable(),
  model: described(z.string().nullable(), 'a design model over the revisions’ parameter keys predicting this target'),
})

const ParameterOut = z.object({
  key: described(z.string(), 'the name models use'),
  name: z.string(),
  value: described(z.union([z.number(), z.string()]), 'as entered: a number in `unit`, or a text models can’t use'),
  unit: described(z.string().nullable(), 'null: dimensionless'),
  tolerance: described(z.number().nullable(), '± half-width in `unit` (rectangular, u = a/√3); null: exact'),
})

const RevisionBriefShape = {
  id: z.string(),
  label: z.string(),
  seq: z.int(),
  parent: described(z.string().nullable(), 'the parent’s label'),
  builtOn: z.iso.date().nullable(),
  summary: z.string(),
  frozen: z.boolean(),
  frozenAt: z.string().nullable(),
}

export const RevisionOut = z.object({
  ...RevisionBriefShape,
  changes: z.array(z.string()),
  parameters: described(z.array(ParameterOut), 'the design parameters this revision sets itself'),
  frozenBy: z.string().nullable(),
  readings: z.int(),
  targetsTested: z.int(),
  createdAt: z.string(),
})

const readingKind = described(z.enum(['samples', 'stated', 'track']), '`samples`: values measured here; `stated`: one result with its own standard uncertainty u (and ν); `track`: positions at times, read as the fitted line’s slope (a speed) with its standard error and n − 2 degrees of freedom')

export const ReadingCreatedOut = z.object({
  reading: z.object({ id: z.string(), kind: readingKind, ...statsShape, unit: z.string(), status: measuredStatus }),
  pooled: described(
    z.object({ ...statsShape, readings: z.int(), status: measuredStatus }).nullable(),
    'the pooled statistics of all readings of the target on the revision, when there is more than one',
  ),
})

export const HistoryEntryOut = z.object({
  revision: z.string(),
  readings: described(z.int(), 'readings pooled'),
  stated: described(z.int(), 'how many of them are stated results; with any, the cell combines the results by inverse-variance weighting (sd, uA, uB are null)'),
  ...statsShape,
  status: measuredStatus,
  delta: nullableNumber('mean − the previous revision’s mean; null on the first'),
  p: nullableNumber('two-sided p of Welch’s test, when both sides have n ≥ 2 (or either holds a stated result: the test on both sides’ u and ν_eff)'),
  movement: z.enum(['gained', 'slipped', 'steady']).nullable(),
  real: z.boolean().nullable(),
  reason: described(
    movementReason.nullable(),
    'the rule that decided; `uncertainty` (derived targets): real when |Δ| > 2·√(u₁² + u₂²)',
  ),
  budget: described(
    z.array(z.object({ key: z.string(), mean: z.number(), u: z.number().nullable(), unit: z.string(), contribution: z.number().nullable(), share: z.number().nullable() })).optional(),
    'derived targets only (n and readings are 0): each input’s mean and u in its own unit, |∂f/∂x|·u(x) in this target’s unit, and its share of u². '
    + 'u is propagated to first order (GUM eq. 10); the 95 % interval uses t(0.975, ν_eff) with ν_eff by Welch–Satterthwaite over the inputs (GUM G.4.1)',
  ),
})

export const ForecastOut = z.object({
  status: z.enum(['already-met', 'converging', 'not-converging', 'not-enough-data']),
  n: described(z.int(), 'points the line went through'),
  slope: nullableNumber('change per revision, in the display unit'),
  crossesAfterLast: described(z.int().nullable(), 'revisions after the last point until the line meets the threshold'),
  crossesAt: described(z.string().nullable(), 'that revision’s label (guessed from the last label when it doesn’t exist yet, e.g. R7)'),
  line: described(z.array(z.object({ index: z.number(), value: z.number() })), 'the fitted line at build positions (0 = first revision), extended ahead'),
  caveat: described(z.string(), 'e.g. "a straight line through 4 points"'),
}).meta({ description: 'least-squares line through the means of the last (up to 5) revisions with a value; at least 3 are needed' })

export const ScoreboardOut = z.object({
  build: z.object({ id: z.string(), slug: z.string(), name: z.string(), summary: z.string(), archived: z.boolean(), teamId: z.string() }),
  revisions: described(z.array(z.string()), 'every revision’s label, oldest first'),
  revisionInfo: described(z.array(z.object(RevisionBriefShape)), 'the same revisions with their details, in the same order'),
  targets: z.array(TargetOut.extend({
    status: z.enum(['met', 'marginal', 'short', 'untested']),
    latest: HistoryEntryOut.nullable(),
    margin: nullableNumber('% from the threshold, positive on the good side'),
    history: described(z.array(HistoryEntryOut), 'one entry per revision with readings (derived: with a value), oldest first'),
    cantEvaluate: described(
      z.array(z.object({ revision: z.string(), reason: z.string() })),
      'derived targets: revisions where an input has a reading but the value can’t be evaluated (an input missing, a division by zero…), with the reason',
    ),
    forecast: ForecastOut,
  })),
})

export const TeamCreatedOut = TeamOut.extend({ personal: described(z.boolean(), 'a one-person team made at sign-up (false here)') })

export const BuildUpdatedOut = z.object({
  id: z.string(),
  name: z.string(),
  slug: z.string(),
  summary: z.string(),
  archived: z.boolean(),
  archivedAt: z.string().nullable(),
  createdAt: z.string(),
})

export const TargetOrderOut = z.object({ keys: described(z.array(z.string()), 'the active targets’ keys in their new strip order') })

export const ReadingDetailOut = z.object({
  id: z.string(),
  kind: readingKind,
  revision: z.string(),
  n: described(z.int(), 'number of samples'),
  stats: described(z.object(statsShape), 'the statistics of this reading alone, in the display unit'),
  status: measuredStatus,
  unitEntered: z.string(),
  valuesEntered: described(z.array(z.number()), 'the samples as entered, in unitEntered'),
  values: described(z.array(z.number()), 'the same samples in the target’s display unit'),
  method: z.string(),
  resolutionEntered: z.number().nullable(),
  resolution: nullableNumber('in the display unit'),
  uEntered: nullableNumber('a stated result’s standard uncertainty as entered, in unitEntered; null for samples'),
  u: nullableNumber('the same in the display unit'),
  dof: nullableNumber('a stated result’s degrees of freedom; null: infinite (or a samples reading); a track’s n − 2'),
  track: described(z.object({
    timeUnit: z.string(),
    unit: z.string(),
    points: z.array(z.object({ t: z.number(), x: z.number(), frame: z.int().optional() })),
    file: described(z.string().nullable(), 'the id of the file the points were marked on'),
  }).nullable(), 'a track reading’s points as entered (t in timeUnit, x in unit); null for other kinds'),
  takenAt: z.string(),
  by: described(z.string().nullable(), 'who recorded it (a person’s name, or the rig token’s label)'),
  rig: described(z.boolean(), 'recorded with a rig token'),
  notes: z.string(),
  createdAt: z.string(),
})

export const FixLandedOut = z.object({
  id: z.string(),
  description: z.string(),
  revision: described(z.string(), 'the label of the revision it landed in'),
  finding: z.object({ id: z.string(), title: z.string(), severity: z.string(), lane: z.string() }),
  targets: described(z.array(z.string()), 'keys of the targets the fix’s finding hurts'),
})

const CantEvaluateOut = z.object({ revision: z.string(), reason: z.string() })

export const TargetDetailOut = z.object({
  target: TargetOut,
  build: BuildRef,
  role,
  status: targetStatus,
  latest: HistoryEntryOut.nullable(),
  margin: nullableNumber('% from the threshold, positive on the good side'),
  history: described(z.array(HistoryEntryOut), 'one entry per revision with readings (derived: with a value), oldest first'),
  cantEvaluate: z.array(CantEvaluateOut),
  readings: described(z.array(ReadingDetailOut), 'every reading of the target'),
  revisions: described(z.array(z.string()), 'every revision’s label, oldest first'),
  forecast: ForecastOut,
  movers: described(
    z.array(z.object({ revision: z.string(), parent: z.string().nullable(), summary: z.string(), changes: z.array(z.string()), fixes: z.array(FixLandedOut), ...movementShape })),
    'the revisions with a value, real movements first (by |delta|, then p), with their changes and the fixes that landed in them',
  ),
  inputs: described(z.array(z.object({ key: z.string(), name: z.string(), unit: z.string(), derived: z.boolean() })), 'a derived target’s inputs'),
  cautions: described(z.array(z.object({
    hazard: z.enum(['electrical', 'thermal', 'mechanical']),
    value: described(z.number(), 'the number the caution is about, in SI'),
    unit: described(z.string(), 'its SI unit: J (a projectile’s kinetic energy), m/s (a rim speed), A (a peak current)'),
    text: described(z.string(), 'the caution with its number and the usual precaution'),
    basis: described(z.string(), 'what the number was worked out from'),
  })), 'cautions with numbers from the target and the latest revision’s design parameters (docs/computation.md, Cautions)'),
})

const CompareSideOut = z.object({ ...statsShape, readings: described(z.int(), 'readings pooled'), status: measuredStatus })
const ParameterSide = z.object({
  value: z.union([z.number(), z.string()]),
  unit: z.string().nullable(),
  tolerance: z.number().nullable(),
  inherited: described(z.boolean(), 'set on an ancestor of the revision'),
})

export const ComparisonOut = z.object({
  build: BuildRef,
  a: RevisionOut,
  b: RevisionOut,
  targets: described(
    z.array(z.object({
      target: TargetOut,
      a: CompareSideOut.nullable(),
      b: CompareSideOut.nullable(),
      ...movementShape,
      delta: nullableNumber('b − a; null when a side has no value'),
      note: described(z.string().nullable(), 'why there is no comparison, e.g. "R3 has no reading of this target"'),
    })),
    'every active target, in strip order',
  ),
  parameters: described(
    z.array(z.object({ key: z.string(), name: z.string(), a: ParameterSide.nullable(), b: ParameterSide.nullable(), differs: z.boolean() })),
    'the two revisions’ effective design parameters (own and inherited) side by side, by key',
  ),
})

export const RevisionDetailOut = RevisionOut.extend({
  parameters: described(
    z.array(ParameterOut.extend({ inherited: described(z.boolean(), 'set on an ancestor, not on this revision') })),
    'the effective design parameters: its own, and every parameter of its ancestors it doesn’t set itself',
  ),
  build: BuildRef,
  role,
  targets: z.array(TargetOut.extend({
    stats: described(HistoryEntryOut.nullable(), 'the target’s pooled statistics on this revision'),
    cantEvaluate: described(z.string().nullable(), 'derived targets: why there is no value on this revision'),
    readings: z.array(ReadingDetailOut),
  })),
  moved: described(ComparisonOut.nullable(), 'what this revision moved against its parent (real movements first); null without a parent'),
  fixesLanded: z.array(FixLandedOut),
})

export const FixOut = z.object({
  id: z.string(),
  description: z.string(),
  state: z.enum(FIX_STATES),
  owner: z.object({ id: z.string(), name: z.string() }).nullable(),
  dueOn: z.iso.date().nullable(),
  landedIn: described(z.string().nullable(), 'the label of the revision the fix landed in'),
})

export const FindingOut = z.object({
  id: z.string(),
  title: z.string(),
  lane: z.enum(LANES),
  severity: z.enum(SEVERITIES),
  rank: described(z.string(), 'orders the lane by byte comparison; safety findings are listed first whatever their rank'),
  version: described(z.int(), 'goes up on every write; send it back with a move'),
  seenOn: described(z.string().nullable(), 'the label of the revision it was seen on'),
  targets: described(z.array(z.string()), 'keys of the targets it hurts'),
  fixes: z.array(FixOut),
  createdAt: z.string(),
  updatedAt: z.string(),
})

export const MoveResultOut = z.object({
  finding: FindingOut,
  respread: described(z.boolean(), 'other cards of the lane got new ranks too: read the lane again'),
  override: described(z.boolean(), 'an Owner’s override let it in'),
})

const BoardMemberOut = z.object({ id: z.string(), name: z.string() })
const BoardTargetOut = z.object({
  key: z.string(),
  name: z.string(),
  quantity: z.string(),
  caution: described(z.boolean(), 'the number touches something that can hurt'),
})
const cardFacts = {
  description: described(z.string(), 'the Markdown source'),
  comments: described(z.int(), 'how many comments'),
  verifiedOn: described(z.string().nullable(), 'the revision whose readings would let it close now'),
  closeBlocker: described(z.string().nullable(), 'why it can’t close yet (null when it can)'),
}

export const BoardOut = z.object({
  build: BuildRef,
  role,
  findings: described(
    z.array(FindingOut.omit({ fixes: true, createdAt: true, updatedAt: true }).extend({
      ...cardFacts,
      fixes: z.array(FixOut.pick({ state: true, owner: true, dueOn: true, landedIn: true })),
    })),
    'every card of the board: a finding without its times or its fixes’ texts',
  ),
  members: z.array(BoardMemberOut),
  targets: z.array(BoardTargetOut),
  revisions: described(z.array(z.string()), 'labels, oldest first'),
})

export const OpenFindingsOut = z.object({
  canFile: described(z.boolean(), 'the caller may file findings on this build'),
  byTarget: described(
    z.record(z.string(), z.array(z.object({ id: z.string(), title: z.string(), severity: z.enum(SEVERITIES) }))),
    'per target key, the open findings that hurt it',
  ),
})

export const CommentOut = z.object({
  id: z.string(),
  body: described(z.string(), 'the Markdown source'),
  html: described(z.string(), 'rendered on the server and sanitized'),
  author: z.string().nullable(),
  mentions: described(z.array(BoardMemberOut), 'the team members it names with @'),
  createdAt: z.string(),
})

export const FindingDetailOut = FindingOut.extend({
  ...cardFacts,
  descriptionHtml: described(z.string(), 'the description rendered on the server and sanitized'),
  build: BuildRef,
  role,
  targetInfo: z.array(BoardTargetOut.extend({ unit: z.string(), status: targetStatus })),
  verification: z.object({ revision: z.string().nullable(), reason: z.string() }),
  commentList: z.array(CommentOut),
  history: z.array(z.object({
    id: z.int(),
    kind: z.enum(['created', 'edited', 'moved', 'fix-added', 'fix-edited']),
    at: z.string(),
    actor: z.string(),
    detail: z.record(z.string(), z.unknown()),
  })),
  members: z.array(BoardMemberOut),
  revisions: z.array(z.string()),
  buildTargets: described(z.array(BoardTargetOut), 'the build’s targets, for choosing the ones it hurts'),
  createdBy: z.string().nullable(),
  closedAt: z.string().nullable(),
  override: described(z.object({ reason: z.string(), by: z.string().nullable() }).nullable(), 'an Owner’s override of a lane rule'),
})

export const FileCreatedOut = z.object({
  id: z.string(),
  name: described(z.string(), 'the client’s name without any directory, cleaned for display'),
  size: described(z.int(), 'bytes'),
  sha256: described(z.string(), 'hex; the download’s ETag is this in quotes'),
  contentType: described(z.string(), 'sniffed from the first bytes'),
})

export const ArchiveImportedOut = z.object({
  build: z.object({
    id: described(z.string(), 'the new build’s id'),
    slug: described(z.string(), 'the new build’s slug: the archived one, made unique in this installation'),
  }),
})

export const FileListOut = z.object({
  items: z.array(FileCreatedOut.extend({
    kind: z.enum(FILE_KINDS as [typeof FILE_KINDS[number], ...typeof FILE_KINDS[number][]]),
    inline: described(z.boolean(), 'opened in the browser rather than downloaded'),
    url: described(z.string(), 'the bytes: GET /api/v1/files/{id}'),
    createdAt: z.string(),
    uploadedBy: described(z.string().nullable(), 'a person’s name, or "rig token …"'),
    revision: z.string().nullable(),
    reading: z.object({ id: z.string(), target: z.string(), targetName: z.string(), revision: z.string() }).nullable(),
    finding: z.object({ id: z.string(), title: z.string() }).nullable(),
    canDelete: described(z.boolean(), 'the caller may delete it (its uploader or an Owner)'),
  })),
  total: z.int(),
  page: z.int(),
  perPage: z.int(),
})

export const CsvPreviewOut = z.object({
  file: z.object({ id: z.string(), name: z.string(), size: z.int() }),
  delimiter: z.string(),
  headerLine: described(z.int(), 'the header’s line in the file (1 unless blank lines come first)'),
  columns: z.array(z.string()),
  rows: described(z.array(z.object({ line: z.int(), cells: z.array(z.string()) })), 'the first rows, as text'),
  totalRows: z.int(),
  guess: described(
    z.object({ value: z.string().nullable(), unit: z.string().nullable(), time: z.string().nullable(), revision: z.string().nullable(), u: z.string().nullable(), dof: z.string().nullable() }),
    'the columns that look like values, units, times and revisions, and like standard uncertainties and degrees of freedom (stated results)',
  ),
  problem: described(z.string().nullable(), 'set when the file can’t be imported as it is (too large, not text)'),
})

export const CsvImportedOut = z.object({
  file: z.object({ id: z.string(), name: z.string() }),
  rows: z.int(),
  readings: described(
    z.array(ReadingCreatedOut.extend({ revision: z.string(), unitEntered: z.string(), n: z.int(), firstLine: z.int(), lastLine: z.int() })),
    'one reading per revision, target and unit found in the file',
  ),
})

export const BuildEventOut = z.object({
  id: z.string(),
  type: z.enum(['target.met', 'target.slipped', 'finding.safety', 'revision.frozen']),
  at: z.iso.datetime({ offset: true }),
  target: described(z.string().optional(), 'the target’s key'),
  revision: described(z.string().optional(), 'the revision’s label'),
  finding: described(z.string().optional(), 'the finding’s id'),
  before: z.record(z.string(), z.unknown()).optional(),
  after: z.record(z.string(), z.unknown()).optional(),
  reasons: z.array(z.string()).optional(),
  title: z.string().optional(),
})

export const SubscriptionOut = z.object({ build: described(z.string(), 'the build’s slug'), frequency: z.enum(FREQUENCY_VALUES) })

export const SignedInOut = z.object({ user: z.object({ id: z.string(), name: z.string(), email: z.string() }) })

const inDisplayUnit = 'in the target’s display unit'
const ValueU = z.object({ value: z.number(), u: z.number().nullable() })

export const TargetDesignOut = z.object({
  target: TargetOut,
  model: z.string().nullable(),
  revisions: described(z.array(z.object({
    revision: z.string(),
    predicted: described(z.object({ value: z.number(), u: z.number() }).nullable(), `the model on the revision’s effective parameters, u from their tolerances (GUM eq. 10), ${inDisplayUnit}`),
    measured: described(z.object({ mean: z.number(), u: z.number().nullable() }).nullable(), `the pooled mean and combined standard uncertainty, ${inDisplayUnit}`),
    ratio: described(ValueU.nullable(), 'measured mean / predicted value; u = ratio·√((u_m/m)² + (u_p/p)²), null when the mean has none'),
    cantPredict: described(z.string().nullable(), 'why there is no prediction on this revision'),
  })), 'every revision, oldest first'),
  calibration: described(z.object({
    factor: z.number(),
    u: z.number().nullable(),
    nu: described(z.number().nullable(), 'the factor’s effective degrees of freedom (Welch–Satterthwaite over the cells’ ν_eff); null when infinite'),
    revisions: described(z.array(z.string()), 'the revisions with both a prediction and a measurement'),
    method: described(z.enum(['weighted', 'plain']), 'inverse-variance weighted mean of the ratios, or their plain mean when a ratio’s u is 0 or unknown'),
  }).nullable(), 'null when no revision has both'),
  sensitivityRevision: described(z.string().nullable(), 'the latest revision with a prediction, where the sensitivities are taken'),
  sensitivity: z.array(z.object({
    parameter: z.string(),
    elasticity: described(z.number().nullable(), '∂ln f/∂ln p'),
    share: described(z.number(), 'the parameter’s share of the predicted u²'),
  })),
})

export const SolveOut = z.object({
  parameter: z.string(),
  value: described(z.number(), 'in the parameter’s unit'),
  unit: z.string().nullable(),
  factor: described(z.number(), 'the calibration factor used (1 without a calibration)'),
  calibrated: described(z.boolean(), 'false when no revision has both a prediction and a measurement yet'),
  revision: described(z.string(), 'the revision whose other parameters were kept'),
  margin: z.enum(['none', '95']),
  predicted: described(z.number(), `the calibrated prediction at that value, ${inDisplayUnit}`),
  u: described(z.number(), 'its standard uncertainty'),
  goal: described(z.number(), 'the value met: the threshold, or the middle of a between band'),
})

export const PlanOut = z.object({
  samplesNeeded: described(z.int().nullable(), 'the smallest n ≥ 2 whose 95 % interval of the mean clears the threshold; null with the reason'),
  reason: z.string(),
  revision: z.string(),
})

// ---- each schema has the shape of the type its route returns ----
type Same<A, B> = [A] extends [B] ? ([B] extends [A] ? true : false) : false
function sameShape<_T extends true>() {}
sameShape<Same<z.output<typeof TargetOut>, TargetView>>()
sameShape<Same<z.output<typeof RevisionOut>, RevisionView>>()
sameShape<Same<z.output<typeof HistoryEntryOut>, HistoryEntry>>()
sameShape<Same<z.output<typeof ForecastOut>, ForecastView>>()
sameShape<Same<z.output<typeof ScoreboardOut>, Scoreboard>>()
sameShape<Same<z.output<typeof ReadingCreatedOut>, ReadingCreated>>()
sameShape<Same<z.output<typeof FixOut>, FixView>>()
sameShape<Same<z.output<typeof FindingOut>, FindingSummary>>()
sameShape<Same<z.output<typeof FileCreatedOut>, FileCreated>>()
sameShape<Same<z.output<typeof TargetDetailOut>, TargetDetail>>()
sameShape<Same<z.output<typeof ComparisonOut>, Comparison>>()
sameShape<Same<z.output<typeof RevisionDetailOut>, RevisionDetail>>()
sameShape<Same<z.output<typeof BuildUpdatedOut>, ReturnType<typeof buildView>>>()
sameShape<Same<z.output<typeof BoardOut>, BoardData>>()
sameShape<Same<z.output<typeof OpenFindingsOut>, OpenFindingsByTarget>>()
sameShape<Same<z.output<typeof CommentOut>, CommentView>>()
sameShape<Same<z.output<typeof FindingDetailOut>, FindingDetail>>()
sameShape<Same<z.output<typeof FileListOut>, FileList>>()
sameShape<Same<z.output<typeof CsvPreviewOut>, CsvPreview>>()
sameShape<Same<z.output<typeof CsvImportedOut>, CsvImported>>()
sameShape<Same<z.output<typeof TargetDesignOut>, TargetDesign>>()
sameShape<Same<z.output<typeof SolveOut>, SolveResult>>()
sameShape<Same<z.output<typeof PlanOut>, SamplePlan>>()
