import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { linkIn, mailTo, rawHeader, waitForMail } from '../support/maildev'
import { startApp, startMaildev, startSecondApp, stopApp, stopMaildev } from '../support/services'

afterAll(closeTestDb)

/** A target ≥ 40 N·m with a first revision whose readings fall short of it. */
async function shortTarget(w: World, key = `torque_${Math.random().toString(36).slice(2, 8)}`) {
  const e = w.engineer.client
  const t = await e.post(`/api/v1/builds/${w.build.slug}/targets`, { key, name: `Wheel torque ${key}`, unit: 'N·m', comparator: 'atLeast', threshold: 40 })
  expect(t.status).toBe(201)
  const label1 = `D${Math.random().toString(36).slice(2, 7)}`
  await e.post(`/api/v1/builds/${w.build.slug}/revisions`, { label: label1, changes: ['first cut'] })
  const r1 = await e.post(`/api/v1/builds/${w.build.slug}/readings`, { revision: label1, target: key, values: [30.1, 30.4, 29.8, 30.2], unit: 'N·m' })
  expect(r1.body.reading.status).toBe('short')
  return { key, label1 }
}

/** A later revision whose readings clear the threshold: the target becomes Met. */
async function meet(w: World, key: string) {
  const label = `M${Math.random().toString(36).slice(2, 7)}`
  await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/revisions`, { label, changes: ['stiffer spokes', 'new gear ratio'] })
  const r = await w.engineer.client.post(`/api/v1/builds/${w.build.slug}/readings`, { revision: label, target: key, values: [45.2, 45.6, 44.9, 45.3, 45.1], unit: 'N·m' })
  expect(r.body.reading.status).toBe('met')
  return { label, reading: r.body.reading }
}

async function settle(ms = 2500) {
  await new Promise(r => setTimeout(r, ms))
}

describe('reviewer e-mail', () => {
  let w: World
  beforeAll(async () => { w = await makeWorld() })

  it('an immediate subscriber gets one e-mail with the right numbers and links when a target is met', async () => {
    expect((await w.reviewer.client.put(`/api/v1/builds/${w.build.slug}/subscription`, { frequency: 'immediate' })).status).toBe(200)
    const { key } = await shortTarget(w)
    const { label, reading } = await meet(w, key)

    const mail = await waitForMail(w.reviewer.email, /Met: Wheel torque/)
    expect(mail.subject).toContain(`Met: Wheel torque ${key}`)
    // the mean of 45.2, 45.6, 44.9, 45.3, 45.1 is 45.22 (by hand); shown to 4 significant digits
    expect(reading.mean).toBeCloseTo(45.22, 10)
    expect(mail.text).toContain('45.22')
    expect(mail.text).toContain(`(Met, ${label})`)
    expect(mail.text).toContain('(Short,')
    expect(linkIn(mail, `/builds/${w.build.slug}/targets/${key}`)).toBeTruthy()
    // RFC 8058 one-click unsubscribe headers
    expect(await rawHeader(mail, 'List-Unsubscribe')).toMatch(/^<http.*\/api\/unsubscribe\?/)
    expect(await rawHeader(mail, 'List-Unsubscribe-Post')).toBe('List-Unsubscribe=One-Click')

    await settle()
    expect((await mailTo(w.reviewer.email)).filter(m => m.subject.includes(key))).toHaveLength(1)

    // the event is in the feed, newest first
    const events = await w.owner.client.get(`/api/v1/builds/${w.build.slug}/events`)
    expect(events.body[0]).toMatchObject({ type: 'target.met', target: key, revision: label })
  })

  it('a daily subscriber gets one digest that groups the events', async () => {
    const daily = w.engineer
    await daily.client.put(`/api/v1/builds/${w.build.slug}/subscription`, { frequency: 'daily' })
    // start the digest window after the earlier tests' events
    const latest = await testDb()('events').where({ build_id: w.build.id }).max({ id: 'id' }).first()
    await testDb()('subscriptions').where({ user_id: daily.user.id, build_id: w.build.id }).update({ digested_through: latest?.id ?? 0 })

    const a = await shortTarget(w)
    const b = await shortTarget(w)
    await meet(w, a.key)
    await meet(w, b.key)
    const preview = await daily.client.get(`/api/builds/${w.build.slug}/digest/preview`)
    expect(preview.body.events).toBe(2)

    const sent = await w.owner.client.post(`/api/builds/${w.build.slug}/digest/send`)
    expect(sent.status).toBe(200)
    const mail = await waitForMail(daily.email, /daily digest/)
    expect(mail.subject).toContain('2 updates')
    expect(mail.text).toContain(a.key)
    expect(mail.text).toContain(b.key)
    await settle()
    expect((await mailTo(daily.email)).filter(m => /digest/.test(m.subject))).toHaveLength(1)

    // nothing new: sending again sends nothing
    await w.owner.client.post(`/api/builds/${w.build.slug}/digest/send`)
    await settle()
    expect((await mailTo(daily.email)).filter(m => /digest/.test(m.subject))).toHaveLength(1)
  })

  it('no e-mail to someone removed from the team or with the subscription off', async () => {
    const leaver = await makeWorld()
    await leaver.engineer.client.put(`/api/v1/builds/${leaver.build.slug}/subscription`, { frequency: 'immediate' })
    await leaver.reviewer.client.put(`/api/v1/builds/${leaver.build.slug}/subscription`, { frequency: 'off' })
    expect((await leaver.owner.client.delete(`/api/teams/${leaver.team.slug}/members/${leaver.engineer.user.id}`)).status).toBe(204)
    // the outsider can't subscribe to a build they can't see
    expect((await leaver.outsider.client.put(`/api/v1/builds/${leaver.build.slug}/subscription`, { frequency: 'immediate' })).status).toBe(404)
    await leaver.owner.client.put(`/api/v1/builds/${leaver.build.slug}/subscription`, { frequency: 'immediate' })

    const { key } = await shortTarget({ ...leaver, engineer: leaver.owner })
    await meet({ ...leaver, engineer: leaver.owner }, key)
    await waitForMail(leaver.owner.email, new RegExp(key))
    await settle()
    expect(await mailTo(leaver.engineer.email)).toEqual([])
    expect(await mailTo(leaver.reviewer.email)).toEqual([])
    expect(await mailTo(leaver.outsider.email)).toEqual([])
  })

  it('unsubscribes by the link without signing in; a forged link is refused', async () => {
    const mail = (await mailTo(w.reviewer.email))[0]!
    const link = new URL((await rawHeader(mail, 'List-Unsubscribe'))!.replace(/^<|>$/g, ''))
    const u = link.searchParams.get('u')!
    const b = link.searchParams.get('b')!
    const s = link.searchParams.get('s')!

    const forged = await new Client().post(`/api/unsubscribe?u=${u}&b=${b}&s=${s.slice(0, -3)}abc`)
    expect(forged.status).toBe(400)
    const otherUser = await new Client().post(`/api/unsubscribe?u=${w.engineer.user.id}&b=${b}&s=${s}`)
    expect(otherUser.status).toBe(400)
    expect((await w.reviewer.client.get(`/api/v1/builds/${w.build.slug}/subscription`)).body.frequency).toBe('immediate')

    // RFC 8058: a POST to the List-Unsubscribe address, with no session
    const res = await new Client().post(`${link.pathname}${link.search}`, 'List-Unsubscribe=One-Click', { 'content-type': 'application/x-www-form-urlencoded' })
    expect(res.status).toBe(200)
    expect((await w.reviewer.client.get(`/api/v1/builds/${w.build.slug}/subscription`)).body.frequency).toBe('off')
  })
})

describe('delivery survives outages', () => {
  it('with the mail server down, e-mails wait and then arrive exactly once', async () => {
    const w = await makeWorld()
    await w.reviewer.client.put(`/api/v1/builds/${w.build.slug}/subscription`, { frequency: 'immediate' })
    const { key } = await shortTarget(w)
    await stopMaildev()
    try {
      await meet(w, key)
      await settle(3000)
      const pending = await testDb()('deliveries').where({ user_id: w.reviewer.user.id, status: 'sent' })
      expect(pending).toEqual([])
    }
    finally {
      await startMaildev()
    }
    await waitForMail(w.reviewer.email, new RegExp(`Met: Wheel torque ${key}`), 60_000)
    await settle(3000)
    expect((await mailTo(w.reviewer.email)).filter(m => m.subject.includes(key))).toHaveLength(1)
  })

  it('an app restart with deliveries pending loses nothing and doubles nothing', async () => {
    const w = await makeWorld()
    await w.reviewer.client.put(`/api/v1/builds/${w.build.slug}/subscription`, { frequency: 'immediate' })
    const { key } = await shortTarget(w)
    const { label } = await meet(w, key)
    await waitForMail(w.reviewer.email, new RegExp(key))

    await stopApp()
    try {
      // an event committed just before the crash, not yet handed to the queue
      const target = await testDb()('targets').where({ build_id: w.build.id, key }).first('id')
      const rev = await testDb()('revisions').where({ build_id: w.build.id, label }).first('id')
      await testDb()('events').insert({ build_id: w.build.id, type: 'target.slipped', target_id: target.id, revision_id: rev.id, before: JSON.stringify({ status: 'met' }), after: JSON.stringify({ status: 'short' }), detail: JSON.stringify({ reasons: ['status'] }) })
    }
    finally {
      await startApp()
    }
    await waitForMail(w.reviewer.email, /Slipped/, 90_000)
    await settle(3000)
    const mails = await mailTo(w.reviewer.email)
    expect(mails.filter(m => /Slipped/.test(m.subject))).toHaveLength(1)
    expect(mails.filter(m => /Met:/.test(m.subject))).toHaveLength(1)
  })

  it('with two app servers working the queue, each e-mail still goes out once', async () => {
    const stopSecond = await startSecondApp(Number(process.env.RATCHET_TEST_APP_PORT) + 50)
    try {
      const w = await makeWorld()
      await w.reviewer.client.put(`/api/v1/builds/${w.build.slug}/subscription`, { frequency: 'immediate' })
      await w.engineer.client.put(`/api/v1/builds/${w.build.slug}/subscription`, { frequency: 'immediate' })
      const keys = [] as string[]
      for (let i = 0; i < 3; i++) {
        const { key } = await shortTarget(w)
        await meet(w, key)
        keys.push(key)
      }
      for (const key of keys) await waitForMail(w.engineer.email, new RegExp(key), 30_000)
      await settle(4000)
      for (const who of [w.reviewer.email, w.engineer.email]) {
        const mails = await mailTo(who)
        for (const key of keys) expect(mails.filter(m => m.subject.includes(key)), `${who} ${key}`).toHaveLength(1)
      }
    }
    finally {
      await stopSecond()
    }
  })
})
