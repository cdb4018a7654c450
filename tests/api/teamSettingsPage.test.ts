import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, makeWorld, type World } from '../support/api'

// The team settings page rendered on the server, as a browser first gets it. Each panel's data
// must be fetched with the caller's session: a request that went without it was refused (401)
// and, landing while the page rendered, once made the whole page an error page.
describe('the team settings page, server-rendered', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })
  afterAll(closeTestDb)

  const settings = async (cookie: string) => {
    const res = await fetch(`${w.owner.client.base}/teams/${w.team.slug}/settings`, { headers: { cookie } })
    return { status: res.status, html: await res.text() }
  }

  it('an Owner gets every panel, the build’s live rig tokens listed, ten times over', async () => {
    for (let i = 0; i < 10; i++) {
      const { status, html } = await settings(w.owner.client.cookie)
      expect(status).toBe(200)
      expect(html).toContain('data-testid="members-panel"')
      expect(html).toContain('data-testid="token-list"')
      // makeWorld's token of the build
      expect(html).toContain('bench rig')
    }
  })

  it('a Reviewer gets the page, without the tokens (theirs to see only from Engineer up)', async () => {
    const { status, html } = await settings(w.reviewer.client.cookie)
    expect(status).toBe(200)
    expect(html).toContain('data-testid="members-panel"')
    expect(html).not.toContain('bench rig')
    expect(html).toContain('Only Engineers and Owners manage rig tokens.')
  })
})
