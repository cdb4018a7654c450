import { z } from 'zod'
import { LoginBody, TeamBody } from '#shared/utils/accountSchemas'
import { ArchiveImportFields, BuildBody, BuildPatch } from '#shared/utils/buildSchemas'
import { EventListQuery, SubscriptionBody } from '#shared/utils/digestSchemas'
import { CsvImportBody, CsvPreviewQuery, FileListQuery, UploadFields } from '#shared/utils/fileSchemas'
import {
  CommentBody, FindingCreate, FindingListQuery, FindingPatch, FixBody, FixPatch, MoveBody,
} from '#shared/utils/findingSchemas'
import { ReadingBody } from '#shared/utils/readingSchemas'
import { CompareQuery, PlanQuery, RevisionBody, RevisionPatch, SolveBody, UnfreezeBody } from '#shared/utils/revisionSchemas'
import { TargetBody, TargetListQuery, TargetOrderBody, TargetPatch } from '#shared/utils/targetSchemas'
import {
  ArchiveImportedOut, BoardOut, BuildEventOut, BuildOut, BuildUpdatedOut, CommentOut, ComparisonOut, CsvImportedOut, CsvPreviewOut,
  FileCreatedOut, FileListOut, FindingDetailOut, FindingOut, FixOut, MoveResultOut, OpenFindingsOut, ReadingCreatedOut,
  PlanOut, RevisionDetailOut, RevisionOut, ScoreboardOut, SignedInOut, SolveOut, SubscriptionOut, TargetDesignOut, TargetDetailOut,
  TargetOrderOut, TargetOut, TeamCreatedOut, TeamOut,
} from './responses'

// The public API, one entry per route file: the OpenAPI document (./document.ts) is generated from
// this list. `body` and `query` are the very schemas the handler passes to bodyAs / queryAs
// (tests/api/openapi.test.ts reads the handlers to check it). Add a route here with its handler.

export type ApiMethod = 'get' | 'post' | 'put' | 'patch' | 'delete'
export type ApiAccess = 'public' | 'session' | 'session-or-rig'

export const API_TAGS = {
  'Sign-in': 'A session for the calls below; a rig sends its token instead',
  'Builds': 'Teams and their builds',
  'Targets': 'The numbers a build has to reach, in their display units',
  'Revisions and readings': 'Each revision of the build, and what was measured on it',
  'Findings': 'Problems seen in testing and their place on the board',
  'Files': 'Evidence: photos, logs, instrument files',
  'Reviewers': 'What reviewers hear about, and how often',
  'This reference': 'The document itself',
} as const
export type ApiTag = keyof typeof API_TAGS

/** An answer: a zod schema (JSON), `raw` (bytes), or none (`schema` absent). */
export interface ApiAnswer {
  description: string
  schema?: z.ZodType
  /** a list of `schema` items */
  list?: boolean
  raw?: string
}

export interface ApiRoute {
  method: ApiMethod
  /** OpenAPI style: /api/v1/builds/{build} */
  path: string
  /** the group the reference page lists it under (API_TAGS) */
  tag: ApiTag
  summary: string
  description?: string
  access: ApiAccess
  /** path parameters: name → description */
  params?: Record<string, string>
  query?: z.ZodObject
  /** a JSON body */
  body?: z.ZodType
  /** a multipart/form-data body: its text fields, and the file part */
  form?: { fields: z.ZodObject, file: z.ZodObject }
  /** parameters read without a zod schema (headers, a flag) */
  otherParams?: { name: string, in: 'query' | 'header', description: string, schema?: Record<string, unknown> }[]
  /** the success answers, by status */
  ok: Record<number, ApiAnswer>
  /** the error statuses; a string replaces the usual description */
  errors: (number | [number, string])[]
  /** the component name of the body's schema in the document */
  bodyName?: string
}

const build = { build: 'The build’s id or slug' }
const buildAnd = (more: Record<string, string>) => ({ ...build, ...more })
const targetKey = { key: 'the target’s key' }
const revisionLabel = { label: 'the revision’s label' }
const findingId = { id: 'the finding’s id' }
const noRig = ' (session only: a rig token gets 403)'
const frozen409: [number, string] = [409, 'The revision is frozen (signed off); an Owner must reopen it first']

const FilePart = z.object({
  file: z.string().meta({ format: 'binary', description: 'the file; its name is kept for display only, its type is sniffed from its bytes' }),
})

export const apiRoutes: ApiRoute[] = [
  {
    method: 'post',
    path: '/api/auth/login',
    tag: 'Sign-in',
    summary: 'Sign in; keep the session cookie for the calls below',
    access: 'public',
    body: LoginBody,
    bodyName: 'Login',
    ok: { 200: { description: 'Signed in', schema: SignedInOut } },
    errors: [400, 401, [429, 'Too many failed sign-ins (Retry-After)']],
  },
  {
    method: 'get',
    path: '/api/v1/teams',
    tag: 'Builds',
    summary: 'The caller’s teams with their role',
    access: 'session',
    ok: { 200: { description: 'OK', schema: TeamOut, list: true } },
    errors: [401, 403],
  },
  {
    method: 'get',
    path: '/api/v1/builds',
    tag: 'Builds',
    summary: 'Builds the caller can see (a rig token: its own build)',
    access: 'session-or-rig',
    ok: { 200: { description: 'OK', schema: BuildOut, list: true } },
    errors: [401],
  },
  {
    method: 'post',
    path: '/api/v1/builds',
    tag: 'Builds',
    summary: 'Create a build (Engineer or Owner of the team)',
    access: 'session',
    body: BuildBody,
    bodyName: 'BuildCreate',
    ok: { 201: { description: 'Created', schema: BuildOut } },
    errors: [400, 401, 403, 404, 409],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}',
    tag: 'Builds',
    summary: 'One build and the caller’s role',
    access: 'session-or-rig',
    params: build,
    ok: { 200: { description: 'OK', schema: BuildOut } },
    errors: [401, 404],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/targets',
    tag: 'Targets',
    summary: 'The build’s targets in strip order',
    access: 'session-or-rig',
    params: build,
    query: TargetListQuery,
    ok: { 200: { description: 'OK', schema: TargetOut, list: true } },
    errors: [400, 401, 404],
  },
  {
    method: 'post',
    path: '/api/v1/builds/{build}/targets',
    tag: 'Targets',
    summary: 'Create a target; thresholds are given in its display unit',
    description: 'With `formula` the target is derived: 400 for a formula that can’t be read, 422 naming an unknown key, both quantities of a dimension mismatch, or the circle of formulas. '
      + 'With `model` it gets a design model over the revisions’ parameters: 400 for one that can’t be read, 422 for a key no revision defines, a text parameter, or a dimension other than the target’s (naming both).',
    access: 'session-or-rig',
    params: build,
    body: TargetBody,
    bodyName: 'TargetCreate',
    ok: { 201: { description: 'Created', schema: TargetOut } },
    errors: [400, 401, 403, 404, 409, 422],
  },
  {
    method: 'post',
    path: '/api/v1/builds/{build}/revisions',
    tag: 'Revisions and readings',
    summary: 'Create a revision, with its design parameters',
    description: 'Parameters are `{key, name, value, unit, tolerance}`; the revision inherits every parameter of its parent it doesn’t set itself. '
      + 'The older shape `{name, value, unit}` is still accepted (the key of the ancestor’s parameter of that name, or one made from the name). '
      + '400 for a key given twice, a key models read otherwise, or, with a key, a unit Ratchet can’t read.',
    access: 'session-or-rig',
    params: build,
    body: RevisionBody,
    bodyName: 'RevisionCreate',
    ok: { 201: { description: 'Created', schema: RevisionOut } },
    errors: [400, 401, 403, 404, 409],
  },
  {
    method: 'post',
    path: '/api/v1/builds/{build}/readings',
    tag: 'Revisions and readings',
    summary: 'Record a reading; its statistics come back in the target’s display unit',
    description: 'The body is samples (`values`) or a stated result (`value`, its standard uncertainty `u` and optionally `dof`; interval value ± t(0.975, dof)·u). '
      + 'Several readings of one target on one revision are pooled into one sample set; with stated results, the sample set and each stated result are combined by inverse-variance weighting (ν by Welch–Satterthwaite). '
      + '400 for a body with both `values` and `value`, or a `u` that is negative or not a number; 404 for a target or revision not in the build; 409 for a frozen revision, an archived target or a derived target (it takes no readings); 422 for an unknown unit or one of another quantity.',
    access: 'session-or-rig',
    params: build,
    body: ReadingBody,
    bodyName: 'ReadingCreate',
    ok: { 201: { description: 'Created', schema: ReadingCreatedOut } },
    errors: [400, 401, 403, 404, 409, 422, [413, 'The request body is too large']],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/scoreboard',
    tag: 'Targets',
    summary: 'Every target with its status, per-revision history and forecast: the target strip and the readings matrix in one answer',
    description: 'Derived targets are evaluated per revision from their inputs’ pooled means; a revision where that fails is listed in `cantEvaluate` with the reason (never an error).',
    access: 'session-or-rig',
    params: build,
    ok: { 200: { description: 'OK', schema: ScoreboardOut } },
    errors: [401, 404],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/findings',
    tag: 'Findings',
    summary: 'The build’s findings by lane: safety first, then by rank',
    access: 'session-or-rig',
    params: build,
    query: FindingListQuery,
    ok: { 200: { description: 'OK', schema: FindingOut, list: true } },
    errors: [400, 401, 404],
  },
  {
    method: 'post',
    path: '/api/v1/builds/{build}/findings',
    tag: 'Findings',
    summary: 'File a finding; it lands at the bottom of Spotted',
    access: 'session-or-rig',
    params: build,
    body: FindingCreate,
    bodyName: 'FindingCreate',
    ok: { 201: { description: 'Created', schema: FindingOut } },
    errors: [400, 401, 403, 404],
  },
  {
    method: 'post',
    path: '/api/v1/findings/{id}/move',
    tag: 'Findings',
    summary: 'Move a finding to a lane, between two cards',
    description: 'Retest needs a fix that landed in a revision. Closed needs a reading on a revision after the one it was seen on (and not before its fix landed), with each target it hurts Met there. An Owner may override either rule with a reason.',
    access: 'session-or-rig',
    params: { id: 'the finding’s id' },
    body: MoveBody,
    bodyName: 'Move',
    ok: { 200: { description: 'OK', schema: MoveResultOut } },
    errors: [
      400, 401, 403, 404,
      [409, 'The version is stale (`data.current` holds the finding as it is now), or the named neighbours moved'],
      [422, 'A lane rule refuses the move; the message says why'],
    ],
  },
  {
    method: 'post',
    path: '/api/v1/builds/{build}/files',
    tag: 'Files',
    summary: 'Upload evidence (a photo, footage, a log, an instrument CSV), optionally attached to a revision, reading or finding',
    description: 'Send the fields before the file so a wrong attachment is refused before the upload. The file streams to storage; '
      + 'past the size limit or the team’s storage quota the answer is 413 and nothing is kept.',
    access: 'session-or-rig',
    params: build,
    form: { fields: UploadFields, file: FilePart },
    bodyName: 'FileUpload',
    ok: { 201: { description: 'Created', schema: FileCreatedOut } },
    errors: [
      400, 401, 403, 404,
      [413, 'Larger than the size limit, or the team’s storage quota would be exceeded'],
      [422, 'The reading named is on another revision than the one named'],
      [503, 'The file store refused or could not be reached; nothing is kept'],
    ],
  },
  {
    method: 'get',
    path: '/api/v1/files/{id}',
    tag: 'Files',
    summary: 'The bytes of a file of a build the caller can see',
    description: 'Images, video, audio, PDF, plain text and CSV are served inline; everything else as an attachment. HTML, SVG, XML and scripts are always an attachment of type application/octet-stream. '
      + 'Content-Disposition carries the name (filename* in UTF-8 when needed).',
    access: 'session-or-rig',
    params: { id: 'the file’s id' },
    otherParams: [
      { name: 'download', in: 'query', description: '1: always as an attachment', schema: { type: 'string', enum: ['1'] } },
      { name: 'Range', in: 'header', description: 'one byte range, e.g. bytes=0-1023 or bytes=-500' },
      { name: 'If-None-Match', in: 'header', description: 'the ETag you hold' },
    ],
    ok: {
      200: { description: 'The whole file', raw: '*/*' },
      206: { description: 'The byte range asked for (Content-Range)', raw: '*/*' },
      304: { description: 'Not modified: If-None-Match matched the ETag' },
    },
    errors: [
      401, 404,
      [416, 'The range starts past the end of the file (Content-Range: bytes */size)'],
      [503, 'The file store can’t be read right now'],
    ],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/events',
    tag: 'Reviewers',
    summary: 'What happened to the build that reviewers hear about, newest first',
    access: 'session-or-rig',
    params: build,
    query: EventListQuery,
    ok: { 200: { description: 'OK', schema: BuildEventOut, list: true } },
    errors: [400, 401, 404],
  },
  {
    method: 'put',
    path: '/api/v1/builds/{build}/subscription',
    tag: 'Reviewers',
    summary: 'The caller’s own digest subscription to the build (session only)',
    access: 'session',
    params: build,
    body: SubscriptionBody,
    bodyName: 'Subscription',
    ok: { 200: { description: 'OK', schema: SubscriptionOut } },
    errors: [400, 401, 403, 404],
  },
  // ---- builds and teams ----
  {
    method: 'post',
    path: '/api/v1/teams',
    tag: 'Builds',
    summary: 'Create a team; the caller becomes its Owner' + noRig,
    description: 'Without `slug` one is made from the name (with a number added when it is taken); a `slug` that is taken is refused with 409.',
    access: 'session',
    body: TeamBody,
    bodyName: 'TeamCreate',
    ok: { 201: { description: 'Created', schema: TeamCreatedOut } },
    errors: [400, 401, 403, [409, 'The slug is taken']],
  },
  {
    method: 'patch',
    path: '/api/v1/builds/{build}',
    tag: 'Builds',
    summary: 'Rename, describe, archive or restore a build (Engineer or Owner)' + noRig,
    access: 'session',
    params: build,
    body: BuildPatch,
    bodyName: 'BuildUpdate',
    ok: { 200: { description: 'OK', schema: BuildUpdatedOut } },
    errors: [400, 401, 403, 404],
  },
  // ---- targets ----
  {
    method: 'get',
    path: '/api/v1/builds/{build}/targets/{key}',
    tag: 'Targets',
    summary: 'One target: its history per revision, every reading, the forecast and the revisions that moved it',
    access: 'session-or-rig',
    params: buildAnd(targetKey),
    ok: { 200: { description: 'OK', schema: TargetDetailOut } },
    errors: [401, 404],
  },
  {
    method: 'patch',
    path: '/api/v1/builds/{build}/targets/{key}',
    tag: 'Targets',
    summary: 'Edit, archive or restore a target (Engineer or Owner); thresholds in its display unit',
    description: 'Fields left out keep their value; the thresholds after the edit are checked together (400 naming the field). '
      + 'A new `unit` must be of the same quantity (422); a formula is checked as on creation (400, 422).',
    access: 'session-or-rig',
    params: buildAnd(targetKey),
    body: TargetPatch,
    bodyName: 'TargetUpdate',
    ok: { 200: { description: 'OK', schema: TargetOut } },
    errors: [400, 401, 403, 404, 422],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/targets/{key}/design',
    tag: 'Targets',
    summary: 'Design math beside the measurement: the model’s prediction against the pooled mean on every revision, the calibration factor and the sensitivities',
    description: 'Every value is in the target’s display unit. `predicted.u` propagates the parameters’ tolerances (rectangular, u = a/√3) to first order (GUM eq. 10); '
      + '`ratio` = measured mean / predicted value; the calibration factor is the inverse-variance weighted mean of the ratios (the plain mean when a ratio’s u is 0 or unknown); '
      + 'the sensitivities (elasticity ∂ln f/∂ln p, share of the predicted u²) are taken on the latest revision with a prediction. A revision without a prediction says why in `cantPredict`.',
    access: 'session-or-rig',
    params: buildAnd(targetKey),
    ok: { 200: { description: 'OK', schema: TargetDesignOut } },
    errors: [401, 404],
  },
  {
    method: 'post',
    path: '/api/v1/builds/{build}/targets/{key}/solve',
    tag: 'Targets',
    summary: 'Solve for what to build: the value of one design parameter at which the calibrated prediction meets the threshold (any member; nothing is stored)',
    description: 'The calibrated prediction is the calibration factor (1 without one) × the model, the other parameters as on `revision` (default the latest). '
      + 'It meets the threshold (the band’s middle for between); with `margin: "95"` its lower 95 % bound (upper for atMost), k = t(0.975, ν) with ν by Welch–Satterthwaite. '
      + 'Found by bracketing root finding from 1/1000× to 1000× of the current value and answered in the parameter’s unit; 422 with the reason when there is no solution there, '
      + 'when the target has no model, or when the parameter is text or not in the model.',
    access: 'session-or-rig',
    params: buildAnd(targetKey),
    body: SolveBody,
    bodyName: 'Solve',
    ok: { 200: { description: 'OK', schema: SolveOut } },
    errors: [400, 401, 404, 422],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/targets/{key}/plan',
    tag: 'Targets',
    summary: 'How many samples tell Met from Short on a revision, from the pooled mean, spread and resolution',
    description: 'The smallest n ≥ 2 for which t(0.975, ν(n))·√(sd²/n + u_B²) < |mean − threshold| (the nearer edge of a between band), ν by Welch–Satterthwaite; '
      + '`samplesNeeded` is null with the reason when there is no scatter yet, when the resolution alone can’t decide it, or past 10,000.',
    access: 'session-or-rig',
    params: buildAnd(targetKey),
    query: PlanQuery,
    ok: { 200: { description: 'OK', schema: PlanOut } },
    errors: [400, 401, 404],
  },
  {
    method: 'post',
    path: '/api/v1/builds/{build}/targets/order',
    tag: 'Targets',
    summary: 'Put the active targets in a new strip order (Engineer or Owner)',
    description: '`keys` lists every active target of the build exactly once; anything else is a 400 saying what is missing, doubled or unknown.',
    access: 'session-or-rig',
    params: build,
    body: TargetOrderBody,
    bodyName: 'TargetOrder',
    ok: { 200: { description: 'OK', schema: TargetOrderOut } },
    errors: [400, 401, 403, 404],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/export/scoreboard.csv',
    tag: 'Targets',
    summary: 'The scoreboard as CSV: one row per target and revision, in each target’s display unit',
    access: 'session-or-rig',
    params: build,
    ok: { 200: { description: 'A CSV file (UTF-8, as an attachment)', raw: 'text/csv' } },
    errors: [401, 404],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/export',
    tag: 'Builds',
    summary: 'The whole build as one archive (tar.gz): its rows, the readings and scoreboard CSVs and every evidence file (Engineer or Owner)' + noRig,
    description: 'The archive’s layout is in docs/archive.md: manifest.json (format, version, counts, every entry’s size and sha256) first, '
      + 'then one JSON per table, readings.csv, scoreboard.csv and files/{id}. People are named by name and e-mail. The archive is streamed.',
    access: 'session',
    params: build,
    ok: { 200: { description: 'A tar.gz file (as an attachment), streamed', raw: 'application/gzip' } },
    errors: [401, 403, 404],
  },
  {
    method: 'post',
    path: '/api/v1/teams/{team}/import',
    tag: 'Builds',
    summary: 'Import a build archive as a new build of the team: all or nothing (Engineer or Owner of the team)' + noRig,
    description: 'Every id is made anew and every reference rewritten; people are matched to accounts by e-mail; rig tokens are not carried. '
      + 'Every entry is checked against the manifest (size, sha256) as it streams in. A corrupt, truncated, foreign or newer archive, an entry named outside the archive, '
      + 'a damaged file, a decompression bomb or rows past the product’s limits are refused with the problem named, and nothing is kept.',
    access: 'session',
    params: { team: 'The team’s id or slug' },
    form: { fields: ArchiveImportFields, file: FilePart },
    bodyName: 'ArchiveImport',
    ok: { 201: { description: 'Created', schema: ArchiveImportedOut } },
    errors: [
      [400, 'Not a readable tar.gz (truncated or corrupt), an entry named with ".." or an absolute path, or no file'],
      401, 403, 404,
      [413, 'Larger than the upload limit, expanding past its limits (a decompression bomb), or over the team’s storage quota'],
      [422, 'Not a Ratchet build archive, a newer format version, a file that does not match its sha256, or rows that break the product’s rules'],
      [503, 'The file store refused or could not be reached; nothing is kept'],
    ],
  },
  // ---- revisions and readings ----
  {
    method: 'get',
    path: '/api/v1/builds/{build}/revisions',
    tag: 'Revisions and readings',
    summary: 'The build’s revisions, oldest first',
    access: 'session-or-rig',
    params: build,
    ok: { 200: { description: 'OK', schema: RevisionOut, list: true } },
    errors: [401, 404],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/revisions/{label}',
    tag: 'Revisions and readings',
    summary: 'One revision: its effective design parameters (own and inherited), every target’s statistics and readings on it, what it moved against its parent, and the fixes that landed in it',
    access: 'session-or-rig',
    params: buildAnd(revisionLabel),
    ok: { 200: { description: 'OK', schema: RevisionDetailOut } },
    errors: [401, 404],
  },
  {
    method: 'patch',
    path: '/api/v1/builds/{build}/revisions/{label}',
    tag: 'Revisions and readings',
    summary: 'Edit a revision’s summary, changes, date and design parameters (Engineer or Owner)',
    description: '`parameters` replaces the revision’s own parameters (inherited ones stay inherited); the rules are those of creation. A frozen revision is a 409.',
    access: 'session-or-rig',
    params: buildAnd(revisionLabel),
    body: RevisionPatch,
    bodyName: 'RevisionUpdate',
    ok: { 200: { description: 'OK', schema: RevisionOut } },
    errors: [400, 401, 403, 404, frozen409],
  },
  {
    method: 'post',
    path: '/api/v1/builds/{build}/revisions/{label}/freeze',
    tag: 'Revisions and readings',
    summary: 'Sign off a revision: it takes no more readings or edits (a Reviewer or an Owner)' + noRig,
    description: 'An Engineer can’t sign off: 403.',
    access: 'session',
    params: buildAnd(revisionLabel),
    ok: { 200: { description: 'OK', schema: RevisionOut } },
    errors: [401, 403, 404, [409, 'The revision is already frozen']],
  },
  {
    method: 'post',
    path: '/api/v1/builds/{build}/revisions/{label}/unfreeze',
    tag: 'Revisions and readings',
    summary: 'Reopen a signed-off revision, saying why (Owner)' + noRig,
    access: 'session',
    params: buildAnd(revisionLabel),
    body: UnfreezeBody,
    bodyName: 'Unfreeze',
    ok: { 200: { description: 'OK', schema: RevisionOut } },
    errors: [400, 401, 403, 404, [409, 'The revision is not frozen']],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/compare',
    tag: 'Revisions and readings',
    summary: 'Two revisions side by side: every active target and the design parameters',
    description: 'Per target: both sides’ pooled statistics, b − a and whether the change is real (Welch’s test, the noise band, or the uncertainties of a derived value).',
    access: 'session-or-rig',
    params: build,
    query: CompareQuery,
    ok: { 200: { description: 'OK', schema: ComparisonOut } },
    errors: [400, 401, 404],
  },
  {
    method: 'delete',
    path: '/api/v1/builds/{build}/readings/{id}',
    tag: 'Revisions and readings',
    summary: 'Delete a reading (Engineer or Owner)' + noRig,
    access: 'session',
    params: buildAnd({ id: 'the reading’s id' }),
    ok: { 204: { description: 'Deleted' } },
    errors: [401, 403, 404, frozen409],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/export/readings.csv',
    tag: 'Revisions and readings',
    summary: 'Every sample of the build’s readings as CSV: as entered, and in SI',
    access: 'session-or-rig',
    params: build,
    ok: { 200: { description: 'A CSV file (UTF-8, as an attachment), streamed', raw: 'text/csv' } },
    errors: [401, 404],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/import/preview',
    tag: 'Revisions and readings',
    summary: 'The header and first rows of an uploaded CSV file, with a guess at its columns (Engineer or Owner)',
    description: 'Upload the file first (POST /api/v1/builds/{build}/files), then name it here. A file that can’t be imported as it is says so in `problem`.',
    access: 'session-or-rig',
    params: build,
    query: CsvPreviewQuery,
    ok: { 200: { description: 'OK', schema: CsvPreviewOut } },
    errors: [400, 401, 403, 404],
  },
  {
    method: 'post',
    path: '/api/v1/builds/{build}/import',
    tag: 'Revisions and readings',
    summary: 'Import readings from an uploaded CSV file: all rows or none (Engineer or Owner)',
    description: 'The rows are grouped into one reading per revision, target and unit. Any bad row refuses the whole file: 422 with `data.problems` (line and message, the first few) and `data.problemCount`.',
    access: 'session-or-rig',
    params: build,
    body: CsvImportBody,
    bodyName: 'CsvImport',
    ok: { 201: { description: 'Created', schema: CsvImportedOut } },
    errors: [
      400, 401, 403, 404,
      [409, 'The file was imported already, or a revision named is frozen'],
      [422, 'The file is not text or too large, or rows can’t be read (`data.problems`); nothing is kept'],
    ],
  },
  // ---- findings ----
  {
    method: 'get',
    path: '/api/v1/builds/{build}/findings/board',
    tag: 'Findings',
    summary: 'The board: every card with what it shows and filters on, the team’s members, the targets and the revisions',
    access: 'session-or-rig',
    params: build,
    ok: { 200: { description: 'OK', schema: BoardOut } },
    errors: [401, 404],
  },
  {
    method: 'get',
    path: '/api/v1/builds/{build}/findings/open',
    tag: 'Findings',
    summary: 'Per target key, the open findings that hurt it',
    access: 'session-or-rig',
    params: build,
    ok: { 200: { description: 'OK', schema: OpenFindingsOut } },
    errors: [401, 404],
  },
  {
    method: 'get',
    path: '/api/v1/findings/{id}',
    tag: 'Findings',
    summary: 'One finding with its description, fixes, comments, history and what would let it close',
    access: 'session-or-rig',
    params: findingId,
    ok: { 200: { description: 'OK', schema: FindingDetailOut } },
    errors: [401, 404],
  },
  {
    method: 'patch',
    path: '/api/v1/findings/{id}',
    tag: 'Findings',
    summary: 'Edit a finding’s title, description, severity, revision seen on or the targets it hurts (Engineer or Owner)',
    description: 'Send the `version` you hold. Moving it between lanes is POST /api/v1/findings/{id}/move. 404 names a revision or target that is not in the build.',
    access: 'session-or-rig',
    params: findingId,
    body: FindingPatch,
    bodyName: 'FindingUpdate',
    ok: { 200: { description: 'OK', schema: FindingOut } },
    errors: [400, 401, 403, 404, [409, 'The version is stale (`data.current` holds the finding as it is now)']],
  },
  {
    method: 'post',
    path: '/api/v1/findings/{id}/fixes',
    tag: 'Findings',
    summary: 'Add a fix to a finding (Engineer or Owner)' + noRig,
    description: 'A landed fix names the revision it landed in. 404 for a revision not in the build; 422 for an owner who is not a member of the team.',
    access: 'session',
    params: findingId,
    body: FixBody,
    bodyName: 'Fix',
    ok: { 201: { description: 'Created', schema: FixOut } },
    errors: [400, 401, 403, 404, [422, 'The owner is not a member of the build’s team']],
  },
  {
    method: 'patch',
    path: '/api/v1/findings/{id}/fixes/{fixId}',
    tag: 'Findings',
    summary: 'Edit a fix: its state, owner, due date or the revision it landed in (Engineer or Owner)' + noRig,
    access: 'session',
    params: { ...findingId, fixId: 'the fix’s id' },
    body: FixPatch,
    bodyName: 'FixUpdate',
    ok: { 200: { description: 'OK', schema: FixOut } },
    errors: [400, 401, 403, 404, [422, 'The owner is not a member of the build’s team']],
  },
  {
    method: 'post',
    path: '/api/v1/findings/{id}/comments',
    tag: 'Findings',
    summary: 'Comment on a finding (Reviewers too); the members it names with @ get an e-mail' + noRig,
    access: 'session',
    params: findingId,
    body: CommentBody,
    bodyName: 'Comment',
    ok: { 201: { description: 'Created', schema: CommentOut } },
    errors: [400, 401, 403, 404],
  },
  // ---- files ----
  {
    method: 'get',
    path: '/api/v1/builds/{build}/files',
    tag: 'Files',
    summary: 'The build’s evidence files, newest first, a page at a time',
    access: 'session-or-rig',
    params: build,
    query: FileListQuery,
    ok: { 200: { description: 'OK', schema: FileListOut } },
    errors: [400, 401, 404],
  },
  {
    method: 'delete',
    path: '/api/v1/files/{id}',
    tag: 'Files',
    summary: 'Delete a file: its uploader or an Owner; evidence of a signed-off revision only an Owner' + noRig,
    access: 'session',
    params: { id: 'the file’s id' },
    description: 'The record goes at once; its bytes are removed from the store right after (or by the next sweep when the store can’t be reached).',
    ok: { 204: { description: 'Deleted' } },
    errors: [401, 403, 404],
  },
  // ---- reviewers ----
  {
    method: 'get',
    path: '/api/v1/builds/{build}/subscription',
    tag: 'Reviewers',
    summary: 'The caller’s own digest subscription to the build' + noRig,
    access: 'session',
    params: build,
    ok: { 200: { description: 'OK (frequency `off` when there is none)', schema: SubscriptionOut } },
    errors: [401, 403, 404],
  },
  {
    method: 'get',
    path: '/api/v1/openapi.json',
    tag: 'This reference',
    summary: 'This document',
    access: 'public',
    ok: { 200: { description: 'The OpenAPI 3.1 document' } },
    errors: [],
  },
  {
    method: 'get',
    path: '/api/v1/docs',
    tag: 'This reference',
    summary: 'This document as a page to browse and try',
    access: 'public',
    ok: { 200: { description: 'An HTML page', raw: 'text/html' } },
    errors: [],
  },
  {
    method: 'get',
    path: '/api/v1/docs/{file}',
    tag: 'This reference',
    summary: 'The script and style files of the page above',
    access: 'public',
    params: { file: 'one of the page’s files' },
    ok: { 200: { description: 'The file', raw: '*/*' }, 304: { description: 'Not modified' } },
    errors: [404],
  },
]
