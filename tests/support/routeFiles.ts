import { readdirSync, statSync } from 'node:fs'
import { join, relative } from 'node:path'
import { ROOT } from './env'

export interface RouteFile {
  /** lower case, as in the file name: get, post, patch, put, delete */
  method: string
  /** the path's segments under /api, parameters as written in the folder names ([build]) */
  segments: string[]
  /** the file's path in the repository */
  file: string
}

/** Every route file under server/api (Nitro's file-based routing: `name.method.ts`, `index` for the folder). */
export function routeFiles(): RouteFile[] {
  const apiDir = join(ROOT, 'server/api')
  const out: RouteFile[] = []
  const walk = (dir: string) => {
    for (const name of readdirSync(dir)) {
      const full = join(dir, name)
      if (statSync(full).isDirectory()) {
        walk(full)
        continue
      }
      const m = name.match(/^(.*)\.(get|post|patch|put|delete)\.ts$/)
      if (!m) continue
      const segments = relative(apiDir, dir).split('/').filter(Boolean)
      if (m[1] !== 'index') segments.push(m[1]!)
      out.push({ method: m[2]!, segments, file: relative(ROOT, full) })
    }
  }
  walk(apiDir)
  return out
}

/** The segments as a path, each `[param]` written by `param`. */
export function routePath(segments: string[], param: (name: string) => string): string {
  return '/api/' + segments.map(s => s.replace(/^\[(.+)\]$/, (_, name: string) => param(name))).join('/')
}
