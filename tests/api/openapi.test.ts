import { readdirSync, readFileSync, statSync } from 'node:fs'
import { join } from 'node:path'
import { Validator } from '@seriousme/openapi-schema-validator'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { z } from 'zod'
import { apiRoutes, type ApiRoute } from '../../server/utils/api/routes'
import {
  BoardOut, BuildOut, BuildUpdatedOut, CommentOut, ComparisonOut, FileListOut, FindingDetailOut, FindingOut, FixOut,
  MoveResultOut, OpenFindingsOut, ReadingCreatedOut, RevisionDetailOut, RevisionOut, ScoreboardOut, TargetDetailOut,
  TargetOut, TeamCreatedOut, TeamOut,
} from '../../server/utils/api/responses'
import { Client, closeTestDb, makeWorld, type World } from '../support/api'
import { upload } from '../support/files'
import { BASE_URL, ROOT } from '../support/env'
import { routeFiles, routePath } from '../support/routeFiles'
import { routes } from '../support/routeTable'

type Doc = Record<string, any>

/** Every route file under server/api as "method /api/path/{param}" → its path in the repository. */
function handlerFiles(): Map<string, string> {
  return new Map(routeFiles().map(r => [`${r.method} ${routePath(r.segments, name => `{${name}}`)}`, r.file]))
}

/** Every export of shared/utils/*Schemas.ts, by name: the schemas a handler may validate with. */
async function sharedSchemas(): Promise<Map<string, unknown>> {
  const out = new Map<string, unknown>()
  const dir = join(ROOT, 'shared/utils')
  for (const file of readdirSync(dir).filter(f => f.endsWith('Schemas.ts'))) {
    for (const [name, value] of Object.entries(await import(join(dir, file)))) out.set(name, value)
  }
  return out
}

/** What a handler file passes to bodyAs(event, …) and queryAs(event, …), as written. */
function validatedWith(source: string): { body: string[], query: string[] } {
  const found = { body: [] as string[], query: [] as string[] }
  for (const m of source.matchAll(/\b(bodyAs|queryAs)\(\s*event\s*,\s*([^)]*?)\s*\)/g)) {
    found[m[1] === 'bodyAs' ? 'body' : 'query'].push(m[2]!)
  }
  return found
}

const key = (r: Pick<ApiRoute, 'method' | 'path'>) => `${r.method} ${r.path}`
type ObjectSchema = { properties: Record<string, any>, required?: string[], anyOf?: ObjectSchema[] }
const input = (schema: z.ZodType) => z.toJSONSchema(schema, { io: 'input' }) as ObjectSchema
/** The branches of a union schema (anyOf), or the schema itself. */
const alternatives = (schema: ObjectSchema): ObjectSchema[] => schema.anyOf ?? [schema]

function deref(doc: Doc, schema: { $ref?: string }) {
  return schema.$ref ? doc.components.schemas[schema.$ref.replace('#/components/schemas/', '')] : schema
}

/** The body schema and query parameters the document gives a route. */
function documented(doc: Doc, route: ApiRoute) {
  const op = doc.paths[route.path]?.[route.method]
  const content = op?.requestBody?.content ?? {}
  const media = content['application/json'] ?? content['multipart/form-data']
  return {
    body: media ? deref(doc, media.schema) : undefined,
    query: (op?.parameters ?? []).filter((p: { in: string, name: string }) => p.in === 'query' && !route.otherParams?.some(o => o.name === p.name)) as { name: string, required: boolean, description?: string, schema: object }[],
  }
}

/**
 * Differences between the schema a handler validates with and what the document says of it,
 * field by field (empty when they agree).
 */
function disagreements(doc: Doc, route: ApiRoute): string[] {
  const out: string[] = []
  const { body, query } = documented(doc, route)
  const expectBody = route.body ?? route.form?.fields
  if (!expectBody) {
    if (body) out.push('the document has a body the handler does not read')
  }
  else if (!body) {
    out.push('the document has no body')
  }
  else {
    // a union body (a reading: samples or a stated result) is documented as anyOf, branch by branch
    const wants = alternatives(input(expectBody))
    const bodies = alternatives(body)
    if (wants.length !== bodies.length) out.push(`the document has ${bodies.length} body alternatives, the schema ${wants.length}`)
    wants.forEach((want, i) => {
      const got: Partial<ObjectSchema> = bodies[i] ?? {}
      const at = wants.length > 1 ? `alternative ${i + 1}, ` : ''
      for (const field of new Set([...Object.keys(want.properties), ...Object.keys(got.properties ?? {})])) {
        if (route.form && field === 'file') continue
        try {
          expect(got.properties?.[field]).toEqual(want.properties[field])
        }
        catch {
          out.push(`${at}body field ${field}: document ${JSON.stringify(got.properties?.[field])} ≠ schema ${JSON.stringify(want.properties[field])}`)
        }
      }
      const required = (got.required ?? []).filter((f: string) => !(route.form && f === 'file')).sort()
      if (JSON.stringify(required) !== JSON.stringify([...want.required ?? []].sort())) out.push(`${at}required body fields: document ${required} ≠ schema ${want.required ?? []}`)
    })
  }
  const wantQuery = route.query ? input(route.query) : { properties: {}, required: [] }
  const names = new Set([...Object.keys(wantQuery.properties), ...query.map(p => p.name)])
  for (const name of names) {
    const p = query.find(q => q.name === name)
    const want = wantQuery.properties[name]
    if (!p || !want) {
      out.push(`query parameter ${name}: only in the ${p ? 'document' : 'schema'}`)
      continue
    }
    const { description, ...schema } = want
    try {
      expect({ ...p.schema, ...(p.description === undefined ? {} : { description: p.description }) }).toEqual({ ...schema, ...(description === undefined ? {} : { description }) })
      expect(p.required).toBe(wantQuery.required?.includes(name) ?? false)
    }
    catch {
      out.push(`query parameter ${name}: document ${JSON.stringify(p)} ≠ schema ${JSON.stringify(want)}`)
    }
  }
  return out
}

let doc: Doc

beforeAll(async () => {
  const res = await new Client().get('/api/v1/openapi.json')
  expect(res.status).toBe(200)
  doc = res.body
})

describe('GET /api/v1/openapi.json', () => {
  it('is a valid OpenAPI 3.1 document', async () => {
    expect(doc.openapi).toBe('3.1.0')
    const validator = new Validator()
    const result = await validator.validate(structuredClone(doc))
    expect(result.errors ?? [], JSON.stringify(result.errors, null, 1)?.slice(0, 2000)).toEqual([])
    expect(result.valid).toBe(true)
    expect(validator.version).toBe('3.1')
  })

  it('has an entry for every /api/v1 handler file, and a handler file for every entry', () => {
    const files = [...handlerFiles().keys()].filter(k => k.includes(' /api/v1/')).sort()
    const listed = apiRoutes.filter(r => r.path.startsWith('/api/v1/')).map(key).sort()
    const inDocument: string[] = []
    for (const [path, item] of Object.entries(doc.paths as Record<string, Record<string, unknown>>)) {
      for (const method of ['get', 'post', 'patch', 'put', 'delete']) if (item[method] && path.startsWith('/api/v1/')) inDocument.push(`${method} ${path}`)
    }
    expect(listed).toEqual(files)
    expect(inDocument.sort()).toEqual(files)
    // and the role matrix lists the same routes
    expect(routes.filter(r => r.path.startsWith('/api/v1/')).map(r => `${r.method.toLowerCase()} ${r.path.replace(/:(\w+)/g, '{$1}')}`).sort()).toEqual(files)
  })

  it('names, for each route, the very schema its handler validates with', async () => {
    const files = handlerFiles()
    const shared = await sharedSchemas()
    const problems: string[] = []
    for (const route of apiRoutes) {
      const file = files.get(key(route))
      if (!file) {
        problems.push(`${key(route)}: no handler file`)
        continue
      }
      const used = validatedWith(readFileSync(join(ROOT, file), 'utf8'))
      for (const part of ['body', 'query'] as const) {
        const names = used[part]
        if (names.length > 1) problems.push(`${file}: validates its ${part} twice (${names.join(', ')})`)
        const name = names[0]
        if (name !== undefined && !shared.has(name)) {
          problems.push(`${file}: validates its ${part} with ${name}, which is not a schema exported from shared/utils/*Schemas.ts; export it there and name it in server/utils/api/routes.ts`)
          continue
        }
        const schema = name === undefined ? undefined : shared.get(name)
        if (route[part] !== schema) {
          const listedName = [...shared].find(([, v]) => v === route[part])?.[0] ?? (route[part] ? 'a schema not from shared/utils' : 'nothing')
          problems.push(`${file}: validates its ${part} with ${name ?? 'nothing'}, but server/utils/api/routes.ts names ${listedName}`)
        }
      }
      if (route.form) {
        // multipart fields are read in the upload module, not the handler
        const name = [...shared].find(([, v]) => v === route.form!.fields)?.[0]
        expect(name, `${key(route)}: its form fields come from shared/utils`).toBeTruthy()
        const utils = join(ROOT, 'server/utils')
        const sources: string[] = []
        const walk = (dir: string) => {
          for (const n of readdirSync(dir)) {
            const full = join(dir, n)
            if (statSync(full).isDirectory()) walk(full)
            else if (n.endsWith('.ts')) sources.push(readFileSync(full, 'utf8'))
          }
        }
        walk(utils)
        if (!sources.some(s => s.includes(`parseOr400(${name},`))) problems.push(`${key(route)}: no server module validates with ${name}`)
      }
    }
    expect(problems).toEqual([])
  })

  it('says a rig token may call a route exactly when its handler lets one in', () => {
    const files = handlerFiles()
    const problems: string[] = []
    for (const route of apiRoutes.filter(r => r.access !== 'public')) {
      const source = readFileSync(join(ROOT, files.get(key(route))!), 'utf8')
      const refuses = /\brefuseRigToken\(event\)/.test(source)
      const allows = /allowRigToken: true|\buseRigToken\(/.test(source)
      if (refuses === allows) {
        problems.push(`${key(route)}: the handler neither lets a rig token in nor refuses it plainly`)
        continue
      }
      const documented = route.access === 'session-or-rig'
      if (documented !== allows) problems.push(`${key(route)}: documented as ${route.access}, but the handler ${allows ? 'lets a rig token in' : 'refuses a rig token'}`)
    }
    expect(problems).toEqual([])
  })

  it('describes each route’s body and query exactly as the handler’s zod schema does, field by field', () => {
    const problems = apiRoutes.flatMap(route => disagreements(doc, route).map(p => `${key(route)}: ${p}`))
    expect(problems).toEqual([])
    // a check that can tell: a field the document would lack is reported
    const readings = apiRoutes.find(r => r.path === '/api/v1/builds/{build}/readings')!
    const broken = structuredClone(doc)
    delete broken.components.schemas.ReadingCreate.anyOf[0].properties.unit
    broken.components.schemas.ReadingCreate.anyOf[0].properties.values.maxItems = 5
    broken.components.schemas.ReadingCreate.anyOf[1].properties.u.minimum = -1
    expect(disagreements(broken, readings)).toEqual([
      expect.stringContaining('alternative 1, body field values'),
      expect.stringContaining('alternative 1, body field unit'),
      expect.stringContaining('alternative 2, body field u'),
    ])
  })

  it('keeps the limits, descriptions and examples of the shared schemas', () => {
    // a reading is samples or a stated result (value ± u)
    const [reading, stated] = doc.components.schemas.ReadingCreate.anyOf
    expect(reading.required).toEqual(['revision', 'target', 'values', 'unit'])
    // the sample limit is shared/utils/readingStats.ts's MAX_SAMPLES
    expect(reading.properties.values).toMatchObject({ type: 'array', minItems: 1, maxItems: 10_000, description: expect.stringContaining('numeric strings are refused') })
    expect(reading.examples[0]).toMatchObject({ target: 'top_speed', unit: 'km/h' })
    expect(stated.required).toEqual(['revision', 'target', 'value', 'u', 'unit'])
    expect(stated.properties.u).toMatchObject({ type: 'number', minimum: 0, description: expect.stringContaining('standard uncertainty') })
    expect(stated.properties.dof.description).toContain('infinite')
    expect(doc.components.schemas.TargetCreate.properties.formula.description).toContain('derived target')
    expect(doc.components.schemas.Move.properties.lane.enum).toEqual(['spotted', 'traced', 'bench', 'retest', 'closed', 'parked'])
    expect(doc.components.schemas.FindingCreate.properties.severity.enum).toEqual(['safety', 'blocks-target', 'degrades', 'cosmetic'])
    expect(doc.components.schemas.Fix.properties.state.enum).toEqual(['planned', 'in-progress', 'landed', 'dropped'])
    expect(doc.components.schemas.FileUpload).toMatchObject({ required: ['file'], properties: { file: { type: 'string', format: 'binary' } } })
    const events = doc.paths['/api/v1/builds/{build}/events'].get.parameters.find((p: { name: string }) => p.name === 'limit')
    expect(events).toMatchObject({ in: 'query', required: false, schema: { type: 'integer', minimum: 1, maximum: 500, default: 100 } })
    expect(doc.paths['/api/v1/files/{id}'].get.parameters.map((p: { name: string }) => p.name)).toEqual(['id', 'download', 'Range', 'If-None-Match'])
  })

  it('documents the error answers and resolves every schema reference', async () => {
    const readings = doc.paths['/api/v1/builds/{build}/readings'].post.responses
    expect(Object.keys(readings)).toEqual(expect.arrayContaining(['201', '400', '401', '403', '404', '409', '413', '422']))
    expect(doc.paths['/api/v1/findings/{id}/move'].post.responses['409'].description).toContain('stale')
    const refs = JSON.stringify(doc).match(/"#\/components\/schemas\/[^"]+"/g) ?? []
    expect(refs.length).toBeGreaterThan(20)
    for (const ref of refs) expect(doc.components.schemas[ref.slice(22, -1)], ref).toBeTruthy()
  })
})

describe('GET /api/v1/docs', () => {
  it('is a page that runs no inline script and loads its files from this server', async () => {
    const res = await fetch(`${BASE_URL}/api/v1/docs`)
    expect(res.status).toBe(200)
    expect(res.headers.get('content-type')).toMatch(/^text\/html/)
    expect(res.headers.get('content-security-policy')).toMatch(/script-src 'self';/)
    const html = await res.text()
    const scripts = [...html.matchAll(/<script\b([^>]*)>([\s\S]*?)<\/script>/g)]
    expect(scripts.map(m => m[1]!.match(/src="([^"]+)"/)?.[1])).toEqual(['/api/v1/docs/swagger-ui-bundle.js', '/api/v1/docs/init.js'])
    expect(scripts.every(m => m[2]!.trim() === '')).toBe(true)
    expect(html).not.toMatch(/https?:\/\//)
  })

  it('serves the page’s own files with an ETag, and no other file', async () => {
    for (const [file, type] of [['swagger-ui-bundle.js', 'text/javascript'], ['swagger-ui.css', 'text/css'], ['init.js', 'text/javascript']]) {
      const res = await fetch(`${BASE_URL}/api/v1/docs/${file}`)
      expect(res.status, file).toBe(200)
      expect(res.headers.get('content-type')).toContain(type)
      const body = await res.text()
      expect(body.length).toBeGreaterThan(file === 'init.js' ? 100 : 100_000)
      const etag = res.headers.get('etag')!
      expect(etag).toBeTruthy()
      expect((await fetch(`${BASE_URL}/api/v1/docs/${file}`, { headers: { 'If-None-Match': etag } })).status).toBe(304)
    }
    for (const file of ['index.html', 'swagger-initializer.js', 'swagger-ui-bundle.js.map', '..%2Fpackage.json']) {
      expect((await fetch(`${BASE_URL}/api/v1/docs/${file}`)).status, file).toBe(404)
    }
  })
})

describe('the documented answers', () => {
  let world: World
  beforeAll(async () => { world = await makeWorld() })
  afterAll(closeTestDb)

  it('are what the routes answer', async () => {
    const c = world.owner.client
    const b = `/api/v1/builds/${world.build.slug}`
    const check = (schema: z.ZodType, body: unknown, what: string) => {
      const r = schema.safeParse(body)
      expect(r.success, `${what}: ${r.error?.message}`).toBe(true)
    }
    check(z.array(TeamOut), (await c.get('/api/v1/teams')).body, 'teams')
    check(z.array(BuildOut), (await c.get('/api/v1/builds')).body, 'builds')
    check(BuildOut, (await c.get(b)).body, 'build')
    const target = await c.post(`${b}/targets`, { key: 'top_speed', name: 'Top speed', unit: 'km/h', comparator: 'atLeast', threshold: 25 })
    expect(target.status).toBe(201)
    check(TargetOut, target.body, 'target')
    const revision = await c.post(`${b}/revisions`, { label: 'R1', parameters: [{ name: 'Mount plate', value: 6, unit: 'mm' }] })
    expect(revision.status).toBe(201)
    check(RevisionOut, revision.body, 'revision')
    await c.post(`${b}/revisions`, { label: 'R2' })
    for (const [label, values] of [['R1', [24.1, 24.3]], ['R1', [24.6]], ['R2', [25.4, 25.9, 25.6]]] as const) {
      const reading = await c.post(`${b}/readings`, { revision: label, target: 'top_speed', values, unit: 'km/h', resolution: 0.1 })
      expect(reading.status).toBe(201)
      check(ReadingCreatedOut, reading.body, 'reading')
    }
    check(ScoreboardOut, (await c.get(`${b}/scoreboard`)).body, 'scoreboard')
    const finding = await c.post(`${b}/findings`, { title: 'Connector warm after the climb', severity: 'degrades', seenOn: 'R1', targets: ['top_speed'] })
    expect(finding.status).toBe(201)
    check(FindingOut, finding.body, 'finding')
    const moved = await c.post(`/api/v1/findings/${finding.body.id}/move`, { lane: 'traced', version: finding.body.version })
    expect(moved.status).toBe(200)
    check(MoveResultOut, moved.body, 'move')
    const fix = await c.post(`/api/v1/findings/${finding.body.id}/fixes`, { description: 'Thicker lead to the connector', state: 'landed', landedIn: 'R2' })
    expect(fix.status).toBe(201)
    check(FixOut, fix.body, 'fix')
    const comment = await c.post(`/api/v1/findings/${finding.body.id}/comments`, { body: 'Measured 61 °C at the shell after the **climb**' })
    expect(comment.status).toBe(201)
    check(CommentOut, comment.body, 'comment')
    const file = await upload(c, world.build.slug, 'climb-log.txt', 'lap 1: 61 C at the connector\n', { finding: finding.body.id, revision: 'R2' })
    expect(file.status).toBe(201)

    // the routes that moved into /api/v1, read back after the writes above
    const answers: [z.ZodType, string, string][] = [
      [TargetDetailOut, `${b}/targets/top_speed`, 'target detail'],
      [z.array(RevisionOut), `${b}/revisions`, 'revisions'],
      [RevisionDetailOut, `${b}/revisions/R2`, 'revision detail'],
      [ComparisonOut, `${b}/compare?a=R1&b=R2`, 'comparison'],
      [BoardOut, `${b}/findings/board`, 'board'],
      [OpenFindingsOut, `${b}/findings/open`, 'open findings'],
      [FindingDetailOut, `/api/v1/findings/${finding.body.id}`, 'finding detail'],
      [FileListOut, `${b}/files`, 'files'],
    ]
    for (const [schema, url, what] of answers) {
      const res = await c.get(url)
      expect(res.status, what).toBe(200)
      check(schema, res.body, what)
    }
    // the answers hold what was written, so the schemas were checked against full answers
    const detail = await c.get(`${b}/revisions/R2`)
    expect(detail.body.moved.targets[0]).toMatchObject({ target: { key: 'top_speed' }, a: { readings: 2 }, b: { readings: 1 } })
    expect(detail.body.fixesLanded.map((f: { id: string }) => f.id)).toEqual([fix.body.id])
    const board = await c.get(`${b}/findings/board`)
    expect(board.body.findings).toEqual([expect.objectContaining({ id: finding.body.id, lane: 'traced', comments: 1 })])
    const found = await c.get(`/api/v1/findings/${finding.body.id}`)
    expect(found.body.commentList[0].html).toContain('<strong>climb</strong>')
    expect((await c.get(`${b}/files`)).body.items).toEqual([expect.objectContaining({ id: file.body.id, revision: 'R2', finding: { id: finding.body.id, title: expect.any(String) } })])

    const edited = await c.patch(`${b}/targets/top_speed`, { stretch: 28 })
    expect(edited.status).toBe(200)
    check(TargetOut, edited.body, 'target edit')
    const revised = await c.patch(`${b}/revisions/R1`, { summary: 'First frame' })
    expect(revised.status).toBe(200)
    check(RevisionOut, revised.body, 'revision edit')
    const renamed = await c.patch(b, { summary: 'Cargo trike, second frame' })
    expect(renamed.status).toBe(200)
    check(BuildUpdatedOut, renamed.body, 'build edit')
    const team = await c.post('/api/v1/teams', { name: 'Frame shop' })
    expect(team.status).toBe(201)
    check(TeamCreatedOut, team.body, 'team')
    // a check that can tell: an answer missing a documented field is refused
    const { unit: _unit, ...withoutUnit } = target.body
    expect(TargetOut.safeParse(withoutUnit).success).toBe(false)
    const { movers: _movers, ...withoutMovers } = (await c.get(`${b}/targets/top_speed`)).body
    expect(TargetDetailOut.safeParse(withoutMovers).success).toBe(false)
  })
})
