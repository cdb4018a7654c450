import { execFileSync } from 'node:child_process'
import { describe, expect, it } from 'vitest'
import { BASE_URL, ROOT } from '../support/env'

function db(cmd: 'start' | 'stop') {
  // the project's own script, with the test cluster's settings exported by scripts/test.sh
  execFileSync('bash', [`${ROOT}scripts/db.sh`, cmd], { stdio: 'pipe' })
}

async function health() {
  const res = await fetch(`${BASE_URL}/api/health`)
  return { status: res.status, body: await res.json() }
}

describe('GET /api/health', () => {
  it('is ok with the database up', async () => {
    expect(await health()).toEqual({ status: 200, body: { status: 'ok', db: 'ok' } })
  })

  it('answers 503 while PostgreSQL is stopped, and ok again after it restarts', async () => {
    db('stop')
    try {
      const down = await health()
      expect(down.status).toBe(503)
      expect(down.body.db).toBe('down')
    }
    finally {
      db('start')
    }
    // the pool drops its dead connections and reconnects
    let again = await health()
    for (let i = 0; i < 20 && again.status !== 200; i++) {
      await new Promise(r => setTimeout(r, 250))
      again = await health()
    }
    expect(again).toEqual({ status: 200, body: { status: 'ok', db: 'ok' } })
  })
})
