import { z } from 'zod'
import type { FileCreated } from '../../../shared/types/files'
import type { FindingSummary, FixView } from '../../../shared/types/findings'
import type { HistoryEntry, ReadingCreated, RevisionView, Scoreboard, TargetView } from '../../../shared/types/api'
import type { ForecastView } from '../../../shared/utils/forecast'
import { FREQUENCY_VALUES } from '../../../shared/utils/digestSchemas'
import { FIX_STATES, LANES, SEVERITIES } from '../../../shared/utils/lanes'
import { ROLES } from '../../../shared/utils/roles'
import { COMPARATORS } from '../../../shared/utils/targetSchemas'
import { QUANTITY_LABELS, type Quantity } from '../../../shared/utils/units'

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
  quantity: z.enum(Object.keys(QUANTITY_LABELS) as [Quantity, ...Quantity[]]),
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
  parameters: z.array(z.object({ name: z.string(), value: z.union([z.number(), z.string()]), unit: z.string().nullable() })),
  frozenBy: z.string().nullable(),
  readings: z.int(),
  targetsTested: z.int(),
  createdAt: z.string(),
})

export const ReadingCreatedOut = z.object({
  reading: z.object({ id: z.string(), ...statsShape, unit: z.string(), status: measuredStatus }),
  pooled: described(
    z.object({ ...statsShape, readings: z.int(), status: measuredStatus }).nullable(),
    'the pooled statistics of all readings of the target on the revision, when there is more than one',
  ),
})

export const HistoryEntryOut = z.object({
  revision: z.string(),
  readings: described(z.int(), 'readings pooled'),
  ...statsShape,
  status: measuredStatus,
  delta: nullableNumber('mean − the previous revision’s mean; null on the first'),
  p: nullableNumber('two-sided p of Welch’s test, when both sides have n ≥ 2'),
  movement: z.enum(['gained', 'slipped', 'steady']).nullable(),
  real: z.boolean().nullable(),
  reason: described(
    z.enum(['welch', 'noise-band', 'uncertainty', 'not-enough-data']).nullable(),
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

export const FileCreatedOut = z.object({
  id: z.string(),
  name: described(z.string(), 'the client’s name without any directory, cleaned for display'),
  size: described(z.int(), 'bytes'),
  sha256: described(z.string(), 'hex; the download’s ETag is this in quotes'),
  contentType: described(z.string(), 'sniffed from the first bytes'),
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
