import { describe, expect, it } from 'vitest'
import { Client } from '../support/api'
import { routes } from '../support/routeTable'

/** Every /api/v1 route as [method, OpenAPI path]; the role matrix checks that the table lists every route file. */
function v1Routes(): [string, string][] {
  return routes.filter(r => r.path.startsWith('/api/v1/'))
    .map(r => [r.method.toLowerCase(), r.path.replace(/:(\w+)/g, '{$1}')] as [string, string])
    .sort()
}

describe('GET /api/v1/openapi.json', () => {
  it('is an OpenAPI 3 document describing every /api/v1 route there is, and no other', async () => {
    const res = await new Client().get('/api/v1/openapi.json')
    expect(res.status).toBe(200)
    const doc = res.body
    expect(doc.openapi).toMatch(/^3\./)
    const documented: [string, string][] = []
    for (const [path, item] of Object.entries(doc.paths as Record<string, Record<string, unknown>>)) {
      for (const method of ['get', 'post', 'patch', 'put', 'delete']) if (item[method]) documented.push([method, path])
    }
    expect(documented.filter(([, p]) => p.startsWith('/api/v1/')).sort()).toEqual(v1Routes())
  })

  it('documents the error answers and resolves every schema reference', async () => {
    const doc = (await new Client().get('/api/v1/openapi.json')).body
    const readings = doc.paths['/api/v1/builds/{build}/readings'].post.responses
    expect(Object.keys(readings)).toEqual(expect.arrayContaining(['201', '400', '401', '403', '404', '409', '422']))
    const refs = JSON.stringify(doc).match(/"#\/components\/schemas\/[^"]+"/g) ?? []
    expect(refs.length).toBeGreaterThan(0)
    for (const ref of refs) expect(doc.components.schemas[ref.slice(22, -1)], ref).toBeTruthy()
  })
})
