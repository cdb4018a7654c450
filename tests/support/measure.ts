import { randomBytes } from 'node:crypto'
import { expect } from 'vitest'
import { testDb, type Client } from './api'

// Factories for targets, revisions and readings through API v1, and a snapshot of a build's
// measurement rows for checking that a refused request changed nothing.

export const uniqueKey = (prefix = 't') => `${prefix}_${randomBytes(4).toString('hex')}`

export interface TargetInput {
  key?: string
  name?: string
  unit?: string
  comparator?: 'atLeast' | 'atMost' | 'between'
  threshold?: number
  thresholdHigh?: number | null
  stretch?: number | null
  noiseBand?: number | null
  notes?: string
  /** a derived target's formula */
  formula?: string | null
  /** a design model over the revisions' parameters */
  model?: string | null
}

export async function newTarget(c: Client, build: string, overrides: TargetInput = {}) {
  const body = { key: uniqueKey(), name: 'Test target', unit: 'N', comparator: 'atLeast', threshold: 10, ...overrides }
  const res = await c.post(`/api/v1/builds/${build}/targets`, body)
  if (res.status !== 201) throw new Error(`target: ${res.status} ${JSON.stringify(res.body)}`)
  return res.body as { id: string, key: string, unit: string, [k: string]: unknown }
}

export async function newRevision(c: Client, build: string, label: string, extra: Record<string, unknown> = {}) {
  const res = await c.post(`/api/v1/builds/${build}/revisions`, { label, ...extra })
  if (res.status !== 201) throw new Error(`revision: ${res.status} ${JSON.stringify(res.body)}`)
  return res.body as { id: string, label: string, [k: string]: unknown }
}

export async function addReading(c: Client, build: string, body: Record<string, unknown>) {
  const res = await c.post(`/api/v1/builds/${build}/readings`, body)
  if (res.status !== 201) throw new Error(`reading: ${res.status} ${JSON.stringify(res.body)}`)
  return res.body
}

/** Every target, revision, reading and cached cell of a build, for before/after comparisons. */
export async function snapshot(buildId: string) {
  const db = testDb()
  const [targets, revisions, readings, cells] = await Promise.all([
    db('targets').where({ build_id: buildId }).orderBy('id'),
    db('revisions').where({ build_id: buildId }).orderBy('id'),
    db('readings').join('targets', 'targets.id', 'readings.target_id').where('targets.build_id', buildId).orderBy('readings.id').select('readings.*'),
    db('cell_stats').where({ build_id: buildId }).orderBy(['target_id', 'revision_id']),
  ])
  return { targets, revisions, readings, cells }
}

/** Runs a request that must be refused with `status`, and checks the build's data is unchanged. */
export async function expectRefused(buildId: string, status: number, call: () => Promise<{ status: number, body: any }>, message?: RegExp) {
  const before = await snapshot(buildId)
  const res = await call()
  expect(res.status, JSON.stringify(res.body)).toBe(status)
  expect(typeof res.body?.message).toBe('string')
  if (message) expect(res.body.message).toMatch(message)
  expect(await snapshot(buildId)).toEqual(before)
  return res
}

/** Relative closeness, for values that went through a unit conversion. */
export function expectRelClose(actual: number, expected: number, rel = 1e-12) {
  expect(Math.abs(actual - expected), `${actual} vs ${expected}`).toBeLessThanOrEqual(rel * Math.abs(expected))
}
