import { z } from 'zod'
import {
  ApiError, BoardOut, BuildEventOut, BuildOut, BuildUpdatedOut, CommentOut, ComparisonOut, CsvImportedOut, CsvPreviewOut,
  ArchiveImportedOut, FileCreatedOut, FileListOut, FindingDetailOut, FindingOut, FixLandedOut, FixOut, ForecastOut, HistoryEntryOut,
  MoveResultOut, OpenFindingsOut, PlanOut, ReadingCreatedOut, ReadingDetailOut, RevisionDetailOut, RevisionOut, ScoreboardOut,
  SignedInOut, SolveOut, SubscriptionOut, TargetDesignOut, TargetDetailOut, TargetOrderOut, TargetOut, TeamCreatedOut, TeamOut,
} from './responses'
import { API_TAGS, apiRoutes, type ApiAccess, type ApiAnswer, type ApiRoute } from './routes'

// The OpenAPI 3.1 document of the public API (GET /api/v1/openapi.json, browsable at /api/v1/docs),
// generated from the route list in ./routes.ts and the zod schemas the handlers validate with.

type JsonSchema = Record<string, unknown>

const ERROR_TEXT: Record<number, string> = {
  400: 'Bad input (the message and `data.fields` name the field)',
  401: 'Not signed in, or the rig token is unknown, expired or revoked',
  403: 'The role is too low, or a rig token used outside its build routes',
  404: 'Not found, or not visible to the caller',
  409: 'Conflicts with the current state (a duplicate, a frozen revision)',
  422: 'A unit that is unknown or of another quantity; a formula naming a key that is not a target of the build, giving another quantity than the target’s, or closing a circle of formulas; a model naming a key no revision defines, or giving another quantity; no solution in the solver’s range',
}

/** Answers named as components (the names earlier versions of this document used). */
const ANSWERS: Record<string, z.ZodType> = {
  Error: ApiError,
  Team: TeamOut,
  Build: BuildOut,
  Target: TargetOut,
  Revision: RevisionOut,
  ReadingCreated: ReadingCreatedOut,
  HistoryEntry: HistoryEntryOut,
  Forecast: ForecastOut,
  Scoreboard: ScoreboardOut,
  Fix: FixOut,
  Finding: FindingOut,
  MoveResult: MoveResultOut,
  FileCreated: FileCreatedOut,
  Event: BuildEventOut,
  Subscription: SubscriptionOut,
  SignedIn: SignedInOut,
  TeamCreated: TeamCreatedOut,
  BuildUpdated: BuildUpdatedOut,
  TargetOrder: TargetOrderOut,
  ReadingDetail: ReadingDetailOut,
  FixLanded: FixLandedOut,
  TargetDetail: TargetDetailOut,
  Comparison: ComparisonOut,
  RevisionDetail: RevisionDetailOut,
  Board: BoardOut,
  OpenFindings: OpenFindingsOut,
  Comment: CommentOut,
  FindingDetail: FindingDetailOut,
  FileList: FileListOut,
  CsvPreview: CsvPreviewOut,
  CsvImported: CsvImportedOut,
  TargetDesign: TargetDesignOut,
  Solved: SolveOut,
  SamplePlan: PlanOut,
  ArchiveImported: ArchiveImportedOut,
}

const ref = (name: string) => ({ $ref: `#/components/schemas/${name}` })

function withoutDialect(schema: JsonSchema): JsonSchema {
  const { $schema: _s, $id: _i, ...rest } = schema
  return rest
}

/** A request schema as the document shows it: what the client sends (before defaults and transforms). */
export function requestJsonSchema(schema: z.ZodType): JsonSchema {
  return withoutDialect(z.toJSONSchema(schema, { io: 'input' }) as JsonSchema)
}

/**
 * The answers as JSON Schemas, nested components by reference. Objects are left open
 * (`additionalProperties` unset): a later version may add fields.
 */
function answerSchemas(): Record<string, JsonSchema> {
  const registry = z.registry<{ id: string }>()
  for (const [id, schema] of Object.entries(ANSWERS)) registry.add(schema, { id })
  const { schemas } = z.toJSONSchema(registry, {
    io: 'output',
    uri: id => `#/components/schemas/${id}`,
    override: ({ jsonSchema }) => {
      if (jsonSchema.additionalProperties === false) delete jsonSchema.additionalProperties
      if (jsonSchema.type === 'integer' && jsonSchema.maximum === Number.MAX_SAFE_INTEGER) {
        delete jsonSchema.maximum
        delete jsonSchema.minimum
      }
    },
  })
  return Object.fromEntries(Object.entries(schemas).map(([id, s]) => [id, withoutDialect(s as JsonSchema)]))
}

const SECURITY: Record<ApiAccess, Record<string, string[]>[]> = {
  'public': [],
  'session': [{ session: [] }],
  'session-or-rig': [{ session: [] }, { rigToken: [] }],
}

function answerName(schema: z.ZodType): string | undefined {
  return Object.entries(ANSWERS).find(([, s]) => s === schema)?.[0]
}

function answer({ description, schema, list, raw }: ApiAnswer) {
  if (raw) return { description, content: { [raw]: { schema: { type: 'string', format: 'binary' } } } }
  if (!schema) return { description }
  const name = answerName(schema)
  if (!name) throw new Error(`An answer schema without a component name: ${description}`)
  return { description, content: { 'application/json': { schema: list ? { type: 'array', items: ref(name) } : ref(name) } } }
}

function parameters(route: ApiRoute) {
  const out: JsonSchema[] = []
  for (const [name, description] of Object.entries(route.params ?? {})) {
    out.push({ name, in: 'path', required: true, description, schema: { type: 'string' } })
  }
  if (route.query) {
    const json = requestJsonSchema(route.query) as { properties: Record<string, JsonSchema>, required?: string[] }
    for (const [name, { description, ...schema }] of Object.entries(json.properties)) {
      out.push({ name, in: 'query', required: json.required?.includes(name) ?? false, ...(description ? { description } : {}), schema })
    }
  }
  for (const { schema, ...p } of route.otherParams ?? []) out.push({ ...p, schema: schema ?? { type: 'string' } })
  return out
}

function requestBody(route: ApiRoute, schemas: Record<string, JsonSchema>) {
  if (!route.body && !route.form) return undefined
  const name = route.bodyName
  if (!name) throw new Error(`${route.method} ${route.path}: a body needs a component name`)
  if (route.body) {
    schemas[name] = requestJsonSchema(route.body)
    return { required: true, content: { 'application/json': { schema: ref(name) } } }
  }
  const fields = requestJsonSchema(route.form!.fields) as { properties: JsonSchema }
  const file = requestJsonSchema(route.form!.file) as { properties: JsonSchema, required: string[] }
  schemas[name] = { type: 'object', required: file.required, properties: { ...file.properties, ...fields.properties } }
  return { required: true, content: { 'multipart/form-data': { schema: ref(name) } } }
}

function operation(route: ApiRoute, schemas: Record<string, JsonSchema>) {
  const responses: Record<string, unknown> = {}
  for (const [status, a] of Object.entries(route.ok)) responses[status] = answer(a)
  for (const e of route.errors) {
    const [status, text] = typeof e === 'number' ? [e, ERROR_TEXT[e]] : e
    if (!text) throw new Error(`${route.method} ${route.path}: say what ${status} means`)
    responses[String(status)] = { description: text, content: { 'application/json': { schema: ref('Error') } } }
  }
  const params = parameters(route)
  const body = requestBody(route, schemas)
  return {
    tags: [route.tag],
    summary: route.summary,
    ...(route.description ? { description: route.description } : {}),
    security: SECURITY[route.access],
    ...(params.length ? { parameters: params } : {}),
    ...(body ? { requestBody: body } : {}),
    responses,
  }
}

export function buildOpenApiDocument(routes: readonly ApiRoute[] = apiRoutes) {
  const schemas: Record<string, JsonSchema> = answerSchemas()
  const paths: Record<string, Record<string, unknown>> = {}
  for (const route of routes) {
    const item = (paths[route.path] ??= {})
    if (item[route.method]) throw new Error(`${route.method} ${route.path} is listed twice`)
    item[route.method] = operation(route, schemas)
  }
  return {
    openapi: '3.1.0',
    info: {
      title: 'Ratchet API',
      version: '1',
      description: 'Targets, revisions and readings of a build, for test rigs and scripts. Numbers are in the target’s display unit unless stated otherwise. '
        + 'Errors are JSON {statusCode, message, data?}; bad input never gets a 500.',
    },
    servers: [{ url: '/' }],
    tags: Object.entries(API_TAGS).map(([name, description]) => ({ name, description })),
    components: {
      securitySchemes: {
        session: { type: 'apiKey', in: 'cookie', name: 'nuxt-session', description: 'The cookie set by POST /api/auth/login' },
        rigToken: { type: 'http', scheme: 'bearer', description: 'A rig token: Engineer rights on its own build, through /api/v1/builds/{build}/… only' },
      },
      schemas,
    },
    paths,
  }
}

let cached: ReturnType<typeof buildOpenApiDocument> | undefined

/** The document, built once per process. */
export function openApiDocument() {
  return (cached ??= buildOpenApiDocument())
}
