import { execFileSync } from 'node:child_process'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, signUp, type SignedUp } from '../support/api'
import { BASE_URL, ROOT } from '../support/env'

function db(cmd: 'start' | 'stop') {
  // the project's own script, with the test cluster's settings exported by scripts/test.sh
  execFileSync('bash', [`${ROOT}scripts/db.sh`, cmd], { stdio: 'pipe' })
}

async function health() {
  const res = await fetch(`${BASE_URL}/api/health`)
  return { status: res.status, body: await res.json(), retryAfter: res.headers.get('retry-after') }
}

const UP = { status: 'ok', db: 'ok', mail: 'ok' }

describe('GET /api/health', () => {
  let person: SignedUp
  beforeAll(async () => { person = await signUp({ name: 'Outage Witness' }) })
  afterAll(closeTestDb)

  it('is ok with the database and the mail relay up', async () => {
    expect(await health()).toEqual({ status: 200, body: UP, retryAfter: null })
  })

  it('while PostgreSQL is stopped: health names the database, every API call is a 503 with Retry-After, and all is well as soon as it is back', async () => {
    db('stop')
    try {
      const down = await health()
      expect(down.status).toBe(503)
      expect(down.body).toEqual({ status: 'degraded', db: 'down', mail: 'ok', down: ['db'] })
      expect(Number(down.retryAfter)).toBeGreaterThan(0)
      // signed in, anonymous, reading and writing: a 503 the client can retry, never a 500
      const calls = [
        () => person.client.get('/api/account'),
        () => person.client.get('/api/v1/teams'),
        () => person.client.post('/api/v1/teams', { name: 'Made during the outage' }),
        () => new Client().post('/api/auth/login', { email: person.email, password: person.password }),
        () => new Client().post('/api/auth/signup', { name: 'Late Person', email: 'late@example.test', password: 'torque-wrench-5501' }),
      ]
      for (const call of calls) {
        const res = await call()
        expect(res.status, JSON.stringify(res.body)).toBe(503)
        expect(Number(res.headers.get('retry-after'))).toBeGreaterThan(0)
        expect(res.body.message).toMatch(/database is unavailable/)
      }
    }
    finally {
      db('start')
    }
    // the pool drops its dead connections and reconnects
    const started = Date.now()
    let again = await health()
    for (let i = 0; i < 40 && again.status !== 200; i++) {
      await new Promise(r => setTimeout(r, 100))
      again = await health()
    }
    expect(again).toEqual({ status: 200, body: UP, retryAfter: null })
    expect(Date.now() - started).toBeLessThan(4000)
    expect((await person.client.get('/api/account')).status).toBe(200)
  })
})
