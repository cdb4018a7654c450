import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, type World } from '../support/api'
import { routeFiles, routePath } from '../support/routeFiles'
import { ACTORS, routes, type Actor, type RouteCase } from '../support/routeTable'

/** Every route file under server/api as "METHOD /api/path/:param". */
function serverRoutes(): string[] {
  return routeFiles()
    .map(r => `${r.method.toUpperCase()} ${routePath(r.segments, name => `:${name}`).replace(/\/$/, '')}`)
    .sort()
}

function clientFor(w: World, actor: Actor, cookie?: string): Client {
  const c = new Client()
  if (actor === 'foreignRig') c.bearer = w.foreignToken
  else if (actor !== 'anon') c.cookie = cookie ?? w[actor].client.cookie
  return c
}

function fill(path: string, params: Record<string, string>): string {
  return path.replace(/:(\w+)/g, (_, k: string) => {
    if (!(k in params)) throw new Error(`no value for :${k} in ${path}`)
    return encodeURIComponent(params[k]!)
  })
}

describe('the role matrix', () => {
  let world: World
  beforeAll(async () => { world = await makeWorld() })
  afterAll(closeTestDb)

  it('lists every route the server has, and no route it lacks', () => {
    const table = routes.map(r => `${r.method} ${r.path}`).sort()
    expect(new Set(table).size).toBe(table.length)
    expect(table).toEqual(serverRoutes())
  })

  it.each(routes.map(r => [`${r.method} ${r.path}`, r] as [string, RouteCase]))('%s', async (_name, route) => {
    const got: Record<string, number> = {}
    const messages: Record<string, string> = {}
    for (const actor of ACTORS) {
      const prepared = await route.prepare?.(world, actor) ?? {}
      const params = prepared.params ?? { team: world.team.slug, build: world.build.slug }
      const path = fill(route.path, params) + (prepared.query ? `?${prepared.query}` : '')
      const body = prepared.body ?? (route.method === 'GET' || route.method === 'DELETE' ? undefined : {})
      const res = await clientFor(world, actor, prepared.cookie).request(route.method, path, body)
      got[actor] = res.status
      if (res.status >= 400) messages[actor] = res.body?.message
      // an error always carries a message a person can act on
      if (res.status >= 400) expect(typeof res.body?.message, `${actor}: ${JSON.stringify(res.body)}`).toBe('string')
    }
    expect(got, JSON.stringify(messages)).toEqual(route.expect)
  })
})
