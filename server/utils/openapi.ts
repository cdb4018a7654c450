import { MAX_SAMPLES } from '../../shared/utils/readingStats'
import { QUANTITY_LABELS } from '../../shared/utils/units'

// The OpenAPI 3 description of API v1, served at GET /api/v1/openapi.json. Hand-written: when a
// /api/v1 route is added or changed, change it here too (tests/api/openapi.test.ts checks that
// every route file has its path and method here).

type Schema = Record<string, unknown>

const ref = (name: string) => ({ $ref: `#/components/schemas/${name}` })
const num = { type: 'number' }
const nullableNum = { type: ['number', 'null'] }
const str = { type: 'string' }
const interval = { type: ['array', 'null'], items: num, minItems: 2, maxItems: 2, description: '95 % interval [low, high]; null with one sample and no resolution' }

function errors(...codes: number[]) {
  const text: Record<number, string> = {
    400: 'Bad input (the message and `data.fields` name the field)',
    401: 'Not signed in, or the rig token is unknown, expired or revoked',
    403: 'The role is too low, or a rig token used outside its build routes',
    404: 'Not found, or not visible to the caller',
    409: 'Conflicts with the current state (a duplicate, a frozen revision)',
    422: 'A unit that is unknown or of another quantity; a formula naming a key that is not a target of the build, giving another quantity than the target’s, or closing a circle of formulas',
  }
  return Object.fromEntries(codes.map(c => [String(c), { description: text[c], content: { 'application/json': { schema: ref('Error') } } }]))
}

function json(schema: Schema, description = 'OK') {
  return { description, content: { 'application/json': { schema } } }
}

function body(schema: Schema) {
  return { required: true, content: { 'application/json': { schema } } }
}

const buildParam = { name: 'build', in: 'path', required: true, schema: str, description: 'The build’s id or slug' }
const both = [{ session: [] }, { rigToken: [] }]

const statsProperties = {
  n: { type: 'integer', description: 'number of samples' },
  mean: num,
  sd: { ...nullableNum, description: 'sample standard deviation (n − 1); null when n = 1' },
  uA: { ...nullableNum, description: 'Type A standard uncertainty sd/√n' },
  uB: { ...nullableNum, description: 'Type B standard uncertainty from the resolution, δ/√12' },
  u: { ...nullableNum, description: 'combined standard uncertainty √(uA² + uB²)' },
  nuEff: { ...nullableNum, description: 'Welch–Satterthwaite effective degrees of freedom; null when infinite or absent' },
  ci95: interval,
}

const status = { type: 'string', enum: ['met', 'marginal', 'short'] }

// ---- findings (the board) ----
const laneEnum = { type: 'string', enum: ['spotted', 'traced', 'bench', 'retest', 'closed', 'parked'] }
const severityEnum = { type: 'string', enum: ['safety', 'blocks-target', 'degrades', 'cosmetic'] }

const findingSchemas = {
  Fix: {
    type: 'object',
    properties: {
      id: str,
      description: str,
      state: { type: 'string', enum: ['planned', 'in-progress', 'landed', 'dropped'] },
      owner: { type: ['object', 'null'], properties: { id: str, name: str } },
      dueOn: { type: ['string', 'null'], format: 'date' },
      landedIn: { type: ['string', 'null'], description: 'label of the revision the fix landed in' },
    },
  },
  Finding: {
    type: 'object',
    properties: {
      id: str,
      title: str,
      lane: laneEnum,
      severity: severityEnum,
      rank: { type: 'string', description: 'orders the lane by byte comparison; safety findings are listed first whatever their rank' },
      version: { type: 'integer', description: 'goes up on every write; send it back with a move' },
      seenOn: { type: ['string', 'null'], description: 'label of the revision it was seen on' },
      targets: { type: 'array', items: str, description: 'keys of the targets it hurts' },
      fixes: { type: 'array', items: ref('Fix') },
      createdAt: str,
      updatedAt: str,
    },
  },
  FindingCreate: {
    type: 'object',
    required: ['title', 'severity'],
    properties: {
      title: { type: 'string', maxLength: 200 },
      description: { type: 'string', maxLength: 20000, description: 'Markdown; rendered and sanitized when shown' },
      severity: severityEnum,
      seenOn: { type: ['string', 'null'], description: 'a revision label' },
      targets: { type: 'array', items: str, maxItems: 50, description: 'target keys' },
    },
  },
  Move: {
    type: 'object',
    required: ['lane', 'version'],
    properties: {
      lane: laneEnum,
      before: { type: 'string', description: 'id of the card the moved one goes above' },
      after: { type: 'string', description: 'id of the card the moved one goes below; with neither, to the end of the lane' },
      version: { type: 'integer', description: 'the version you last saw' },
      override: { type: 'object', required: ['reason'], properties: { reason: { type: 'string', minLength: 5, maxLength: 1000 } }, description: 'Owners only: enter Retest or Closed although the rule refuses; the reason is kept in the history' },
    },
  },
  MoveResult: {
    type: 'object',
    properties: {
      finding: ref('Finding'),
      respread: { type: 'boolean', description: 'other cards of the lane got new ranks too: read the lane again' },
      override: { type: 'boolean' },
    },
  },
}

const findingPaths = {
  '/api/v1/builds/{build}/findings': {
    parameters: [buildParam],
    get: {
      summary: 'The build’s findings by lane: safety first, then by rank',
      security: both,
      parameters: [
        { name: 'lane', in: 'query', schema: laneEnum },
        { name: 'severity', in: 'query', schema: severityEnum },
      ],
      responses: { 200: json({ type: 'array', items: ref('Finding') }), ...errors(400, 401, 404) },
    },
    post: {
      summary: 'File a finding; it lands at the bottom of Spotted',
      security: both,
      requestBody: body(ref('FindingCreate')),
      responses: { 201: json(ref('Finding'), 'Created'), ...errors(400, 401, 403, 404) },
    },
  },
  '/api/v1/findings/{id}/move': {
    parameters: [{ name: 'id', in: 'path', required: true, schema: str, description: 'the finding’s id' }],
    post: {
      summary: 'Move a finding to a lane, between two cards',
      description: 'Retest needs a fix that landed in a revision. Closed needs a reading on a revision after the one it was seen on (and not before its fix landed), with each target it hurts Met there. An Owner may override either rule with a reason.',
      security: both,
      requestBody: body(ref('Move')),
      responses: {
        200: json(ref('MoveResult')),
        ...errors(400, 401, 403, 404),
        409: { description: 'The version is stale (`data.current` holds the finding as it is now), or the named neighbours moved', content: { 'application/json': { schema: ref('Error') } } },
        422: { description: 'A lane rule refuses the move; the message says why', content: { 'application/json': { schema: ref('Error') } } },
      },
    },
  },
}

// Evidence files (server/utils/files.ts)
const fileSchemas = {
  FileUpload: {
    type: 'object',
    required: ['file'],
    properties: {
      file: { type: 'string', format: 'binary', description: 'the file; its name is kept for display only, its type is sniffed from its bytes' },
      revision: { type: 'string', description: 'attach to this revision (its label)' },
      reading: { type: 'string', format: 'uuid', description: 'attach to this reading (its id); the file then belongs to the reading’s revision too' },
      finding: { type: 'string', format: 'uuid', description: 'attach to this finding (its id)' },
    },
  },
  FileCreated: {
    type: 'object',
    properties: {
      id: str,
      name: { type: 'string', description: 'the client’s name without any directory, cleaned for display' },
      size: { type: 'integer', description: 'bytes' },
      sha256: { type: 'string', description: 'hex; the download’s ETag is this in quotes' },
      contentType: { type: 'string', description: 'sniffed from the first bytes' },
    },
  },
}

const fileError = (description: string) => ({ description, content: { 'application/json': { schema: ref('Error') } } })

const filePaths = {
  '/api/v1/builds/{build}/files': {
    parameters: [buildParam],
    post: {
      summary: 'Upload evidence (a photo, footage, a log, an instrument CSV), optionally attached to a revision, reading or finding',
      description: 'Send the fields before the file so a wrong attachment is refused before the upload. The file streams to storage; '
        + 'past the size limit or the team’s storage quota the answer is 413 and nothing is kept.',
      security: both,
      requestBody: { required: true, content: { 'multipart/form-data': { schema: ref('FileUpload') } } },
      responses: {
        201: json(ref('FileCreated'), 'Created'),
        ...errors(400, 401, 403, 404),
        413: fileError('Larger than the size limit, or the team’s storage quota would be exceeded'),
        422: fileError('The reading named is on another revision than the one named'),
        503: fileError('The file store refused or could not be reached; nothing is kept'),
      },
    },
  },
  '/api/v1/files/{id}': {
    parameters: [
      { name: 'id', in: 'path', required: true, schema: str, description: 'the file’s id' },
      { name: 'download', in: 'query', schema: { type: 'string', enum: ['1'] }, description: '1: always as an attachment' },
      { name: 'Range', in: 'header', schema: str, description: 'one byte range, e.g. bytes=0-1023 or bytes=-500' },
      { name: 'If-None-Match', in: 'header', schema: str, description: 'the ETag you hold' },
    ],
    get: {
      summary: 'The bytes of a file of a build the caller can see',
      description: 'Images, video, audio, PDF, plain text and CSV are served inline; everything else as an attachment. HTML, SVG, XML and scripts are always an attachment of type application/octet-stream. '
        + 'Content-Disposition carries the name (filename* in UTF-8 when needed).',
      security: both,
      responses: {
        200: { description: 'The whole file', content: { '*/*': { schema: { type: 'string', format: 'binary' } } } },
        206: { description: 'The byte range asked for (Content-Range)', content: { '*/*': { schema: { type: 'string', format: 'binary' } } } },
        304: { description: 'Not modified: If-None-Match matched the ETag' },
        ...errors(401, 404),
        416: fileError('The range starts past the end of the file (Content-Range: bytes */size)'),
        503: fileError('The file store can’t be read right now'),
      },
    },
  },
}

// Reviewer e-mail: the build's events and the caller's digest subscription
const digestPaths = {
  '/api/v1/builds/{build}/events': {
    parameters: [buildParam],
    get: {
      summary: 'What happened to the build that reviewers hear about, newest first',
      security: both,
      parameters: [{ name: 'limit', in: 'query', schema: { type: 'integer', minimum: 1, maximum: 500, default: 100 } }],
      responses: {
        200: json({
          type: 'array',
          items: {
            type: 'object',
            properties: {
              id: str,
              type: { type: 'string', enum: ['target.met', 'target.slipped', 'finding.safety', 'revision.frozen'] },
              at: { type: 'string', format: 'date-time' },
              target: { type: 'string', description: 'the target’s key' },
              revision: { type: 'string', description: 'the revision’s label' },
              finding: { type: 'string', description: 'the finding’s id' },
              before: { type: 'object' },
              after: { type: 'object' },
              reasons: { type: 'array', items: str },
              title: str,
            },
          },
        }),
        ...errors(400, 401, 404),
      },
    },
  },
  '/api/v1/builds/{build}/subscription': {
    parameters: [buildParam],
    put: {
      summary: 'The caller’s own digest subscription to the build (session only)',
      security: [{ session: [] }],
      requestBody: body({ type: 'object', required: ['frequency'], properties: { frequency: { type: 'string', enum: ['immediate', 'daily', 'weekly', 'off'] } } }),
      responses: { 200: json({ type: 'object', properties: { build: str, frequency: str } }), ...errors(400, 401, 403, 404) },
    },
  },
}

export const openApiDocument = {
  openapi: '3.1.0',
  info: {
    title: 'Ratchet API',
    version: '1',
    description: 'Targets, revisions and readings of a build, for test rigs and scripts. Numbers are in the target’s display unit unless stated otherwise. '
      + 'Errors are JSON {statusCode, message, data?}; bad input never gets a 500.',
  },
  servers: [{ url: '/' }],
  components: {
    securitySchemes: {
      session: { type: 'apiKey', in: 'cookie', name: 'nuxt-session', description: 'The cookie set by POST /api/auth/login' },
      rigToken: { type: 'http', scheme: 'bearer', description: 'A rig token: Engineer rights on its own build, through /api/v1/builds/{build}/… only' },
    },
    schemas: {
      Error: {
        type: 'object',
        required: ['statusCode', 'message'],
        properties: { statusCode: { type: 'integer' }, message: str, data: { type: 'object', properties: { fields: { type: 'object', additionalProperties: str } } } },
      },
      Team: { type: 'object', properties: { id: str, name: str, slug: str, role: { type: 'string', enum: ['owner', 'engineer', 'reviewer'] } } },
      Build: {
        type: 'object',
        properties: { id: str, name: str, slug: str, summary: str, createdAt: str, teamId: str, teamSlug: str, teamName: str, role: str },
      },
      BuildCreate: {
        type: 'object',
        required: ['team', 'name'],
        properties: { team: { type: 'string', description: 'team id or slug' }, name: str, slug: str, summary: str },
      },
      TargetCreate: {
        type: 'object',
        required: ['key', 'name', 'unit', 'comparator', 'threshold'],
        properties: {
          key: { type: 'string', pattern: '^[a-z][a-z0-9_]*$', maxLength: 60 },
          name: str,
          unit: { type: 'string', description: 'display unit, e.g. km/h, N·m, °C (GET /api/units lists them)' },
          comparator: { type: 'string', enum: ['atLeast', 'atMost', 'between'] },
          threshold: num,
          thresholdHigh: { ...nullableNum, description: 'upper edge; required for between, ≥ threshold' },
          stretch: nullableNum,
          noiseBand: { ...nullableNum, minimum: 0, description: 'smallest change that matters' },
          notes: str,
          formula: {
            type: ['string', 'null'],
            maxLength: 500,
            description: 'makes it a derived target: a formula over other targets’ keys, e.g. "wheel_torque * wheel_speed" (numbers, keys, + − * / ^, parentheses, pi, sqrt() abs() sin() cos() tan() exp() log() log10()). '
              + 'Each key stands for that target’s pooled mean in SI; the result must be of this target’s quantity. A derived target takes no readings.',
          },
        },
      },
      Target: {
        type: 'object',
        properties: {
          id: str,
          key: str,
          name: str,
          unit: str,
          quantity: { type: 'string', enum: Object.keys(QUANTITY_LABELS) },
          quantityLabel: str,
          comparator: { type: 'string', enum: ['atLeast', 'atMost', 'between'] },
          threshold: num,
          thresholdHigh: nullableNum,
          stretch: nullableNum,
          noiseBand: nullableNum,
          notes: str,
          position: { type: 'integer' },
          archived: { type: 'boolean' },
          caution: { type: 'boolean', description: 'the number touches something that can hurt (current, voltage, heat, spinning parts)' },
          hazard: { type: ['string', 'null'], enum: ['electrical', 'thermal', 'mechanical', null] },
          derived: { type: 'boolean', description: 'evaluated from other targets by `formula`; takes no readings of its own' },
          formula: { type: ['string', 'null'] },
        },
      },
      RevisionCreate: {
        type: 'object',
        required: ['label'],
        properties: {
          label: { type: 'string', pattern: '^[A-Za-z0-9][A-Za-z0-9._-]*$', maxLength: 40 },
          summary: str,
          changes: { type: 'array', items: str, maxItems: 100 },
          parent: { type: ['string', 'null'], description: 'the parent’s label; omitted: the latest revision; null: none' },
          builtOn: { type: ['string', 'null'], format: 'date' },
          parameters: {
            type: 'array',
            maxItems: 100,
            items: { type: 'object', required: ['name', 'value'], properties: { name: str, value: { type: ['number', 'string'] }, unit: { type: ['string', 'null'] } } },
          },
        },
      },
      Revision: {
        type: 'object',
        properties: {
          id: str,
          label: str,
          seq: { type: 'integer' },
          parent: { type: ['string', 'null'] },
          builtOn: { type: ['string', 'null'], format: 'date' },
          summary: str,
          changes: { type: 'array', items: str },
          parameters: { type: 'array', items: { type: 'object' } },
          frozen: { type: 'boolean' },
          frozenAt: { type: ['string', 'null'] },
          frozenBy: { type: ['string', 'null'] },
          readings: { type: 'integer' },
          targetsTested: { type: 'integer' },
          createdAt: str,
        },
      },
      ReadingCreate: {
        type: 'object',
        required: ['revision', 'target', 'values', 'unit'],
        properties: {
          revision: { type: 'string', description: 'the revision’s label' },
          target: { type: 'string', description: 'the target’s key' },
          values: { type: 'array', items: num, minItems: 1, maxItems: MAX_SAMPLES, description: 'finite numbers; numeric strings are refused' },
          unit: { type: 'string', description: 'the unit the values are in; any unit of the target’s quantity' },
          method: str,
          resolution: { ...nullableNum, minimum: 0, description: 'instrument resolution, in the entered unit' },
          takenAt: { type: 'string', format: 'date-time' },
          notes: str,
        },
      },
      ReadingCreated: {
        type: 'object',
        properties: {
          reading: { type: 'object', properties: { id: str, ...statsProperties, unit: str, status } },
          pooled: {
            type: ['object', 'null'],
            description: 'the pooled statistics of all readings of the target on the revision, when there is more than one',
            properties: { ...statsProperties, readings: { type: 'integer' }, status },
          },
        },
      },
      HistoryEntry: {
        type: 'object',
        properties: {
          revision: str,
          readings: { type: 'integer', description: 'readings pooled' },
          ...statsProperties,
          status,
          delta: { ...nullableNum, description: 'mean − the previous revision’s mean; null on the first' },
          p: { ...nullableNum, description: 'two-sided p of Welch’s test, when both sides have n ≥ 2' },
          movement: { type: ['string', 'null'], enum: ['gained', 'slipped', 'steady', null] },
          real: { type: ['boolean', 'null'] },
          reason: { type: ['string', 'null'], enum: ['welch', 'noise-band', 'uncertainty', 'not-enough-data', null], description: 'the rule that decided; `uncertainty` (derived targets): real when |Δ| > 2·√(u₁² + u₂²)' },
          budget: {
            type: 'array',
            description: 'derived targets only (n and readings are 0): each input’s mean and u in its own unit, |∂f/∂x|·u(x) in this target’s unit, and its share of u². '
              + 'u is propagated to first order (GUM eq. 10); the 95 % interval uses t(0.975, ν_eff) with ν_eff by Welch–Satterthwaite over the inputs (GUM G.4.1)',
            items: {
              type: 'object',
              properties: { key: str, mean: num, u: nullableNum, unit: str, contribution: nullableNum, share: nullableNum },
            },
          },
        },
      },
      Forecast: {
        type: 'object',
        description: 'least-squares line through the means of the last (up to 5) revisions with a value; at least 3 are needed',
        properties: {
          status: { type: 'string', enum: ['already-met', 'converging', 'not-converging', 'not-enough-data'] },
          n: { type: 'integer', description: 'points the line went through' },
          slope: { ...nullableNum, description: 'change per revision, in the display unit' },
          crossesAfterLast: { type: ['integer', 'null'], description: 'revisions after the last point until the line meets the threshold' },
          crossesAt: { type: ['string', 'null'], description: 'that revision’s label (guessed from the last label when it doesn’t exist yet, e.g. R7)' },
          line: { type: 'array', items: { type: 'object', properties: { index: num, value: num } }, description: 'the fitted line at build positions (0 = first revision), extended ahead' },
          caveat: { type: 'string', description: 'e.g. "a straight line through 4 points"' },
        },
      },
      Scoreboard: {
        type: 'object',
        properties: {
          build: { type: 'object', properties: { id: str, slug: str, name: str, summary: str, archived: { type: 'boolean' }, teamId: str } },
          revisions: { type: 'array', items: str, description: 'every revision’s label, oldest first' },
          revisionInfo: { type: 'array', items: { type: 'object' } },
          targets: {
            type: 'array',
            items: {
              allOf: [ref('Target'), {
                type: 'object',
                properties: {
                  status: { type: 'string', enum: ['met', 'marginal', 'short', 'untested'] },
                  latest: { oneOf: [ref('HistoryEntry'), { type: 'null' }] },
                  margin: { ...nullableNum, description: '% from the threshold, positive on the good side' },
                  history: { type: 'array', items: ref('HistoryEntry'), description: 'one entry per revision with readings (derived: with a value), oldest first' },
                  cantEvaluate: {
                    type: 'array',
                    description: 'derived targets: revisions where an input has a reading but the value can’t be evaluated (an input missing, a division by zero…), with the reason',
                    items: { type: 'object', properties: { revision: str, reason: str } },
                  },
                  forecast: ref('Forecast'),
                },
              }],
            },
          },
        },
      },
      ...findingSchemas,
      ...fileSchemas,
    },
  },
  paths: {
    '/api/auth/login': {
      post: {
        summary: 'Sign in; keep the session cookie for the calls below',
        security: [],
        requestBody: body({ type: 'object', required: ['email', 'password'], properties: { email: str, password: str } }),
        responses: { 200: json({ type: 'object' }), ...errors(400, 401), 429: { description: 'Too many failed sign-ins (Retry-After)' } },
      },
    },
    '/api/v1/teams': {
      get: { summary: 'The caller’s teams with their role', security: [{ session: [] }], responses: { 200: json({ type: 'array', items: ref('Team') }), ...errors(401, 403) } },
    },
    '/api/v1/builds': {
      get: { summary: 'Builds the caller can see (a rig token: its own build)', security: both, responses: { 200: json({ type: 'array', items: ref('Build') }), ...errors(401) } },
      post: {
        summary: 'Create a build (Engineer or Owner of the team)',
        security: [{ session: [] }],
        requestBody: body(ref('BuildCreate')),
        responses: { 201: json(ref('Build'), 'Created'), ...errors(400, 401, 403, 404, 409) },
      },
    },
    '/api/v1/builds/{build}': {
      parameters: [buildParam],
      get: { summary: 'One build and the caller’s role', security: both, responses: { 200: json(ref('Build')), ...errors(401, 404) } },
    },
    '/api/v1/builds/{build}/targets': {
      parameters: [buildParam],
      get: {
        summary: 'The build’s targets in strip order',
        security: both,
        parameters: [{ name: 'archived', in: 'query', schema: { type: 'string', enum: ['0', '1'] }, description: '1: archived targets too' }],
        responses: { 200: json({ type: 'array', items: ref('Target') }), ...errors(400, 401, 404) },
      },
      post: {
        summary: 'Create a target; thresholds are given in its display unit',
        description: 'With `formula` the target is derived: 400 for a formula that can’t be read, 422 naming an unknown key, both quantities of a dimension mismatch, or the circle of formulas.',
        security: both,
        requestBody: body(ref('TargetCreate')),
        responses: { 201: json(ref('Target'), 'Created'), ...errors(400, 401, 403, 404, 409, 422) },
      },
    },
    '/api/v1/builds/{build}/revisions': {
      parameters: [buildParam],
      post: {
        summary: 'Create a revision',
        security: both,
        requestBody: body(ref('RevisionCreate')),
        responses: { 201: json(ref('Revision'), 'Created'), ...errors(400, 401, 403, 404, 409) },
      },
    },
    '/api/v1/builds/{build}/readings': {
      parameters: [buildParam],
      post: {
        summary: 'Record a reading; its statistics come back in the target’s display unit',
        description: 'Several readings of one target on one revision are pooled into one sample set. 404 for a target or revision not in the build; 409 for a frozen revision, an archived target or a derived target (it takes no readings); 422 for an unknown unit or one of another quantity.',
        security: both,
        requestBody: body(ref('ReadingCreate')),
        responses: { 201: json(ref('ReadingCreated'), 'Created'), ...errors(400, 401, 403, 404, 409, 422), 413: { description: 'The request body is too large' } },
      },
    },
    '/api/v1/builds/{build}/scoreboard': {
      parameters: [buildParam],
      get: {
        summary: 'Every target with its status, per-revision history and forecast: the target strip and the readings matrix in one answer',
        description: 'Derived targets are evaluated per revision from their inputs’ pooled means; a revision where that fails is listed in `cantEvaluate` with the reason (never an error).',
        security: both,
        responses: { 200: json(ref('Scoreboard')), ...errors(401, 404) },
      },
    },
    ...findingPaths,
    ...filePaths,
    ...digestPaths,
    '/api/v1/openapi.json': {
      get: { summary: 'This document', security: [], responses: { 200: json({ type: 'object' }) } },
    },
  },
}
