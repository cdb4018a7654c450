// Starts the job queue's workers in every app server; pg-boss shares the work between them.
export default defineNitroPlugin((nitroApp) => {
  if (process.env.RATCHET_QUEUE === 'off' || import.meta.prerender) return
  onEventsCommitted(nudgeFanout)

  const start = async () => {
    const boss = await useQueue()
    const options = { pollingIntervalSeconds: 0.5, batchSize: 1 }
    await boss.work(QUEUES.fanout, options, async () => { await fanout() })
    await boss.work<{ userId: string, eventId: number }>(QUEUES.deliver, options, async ([job]) => { await deliverEvent(job!.data) })
    await boss.work<{ userId: string, buildId: string, period: 'daily' | 'weekly' | 'now' }>(QUEUES.digest, options, async ([job]) => { await deliverDigest(job!.data) })
    await boss.work(QUEUES.mentions, options, async () => { await deliverMentions() })
    await boss.work(QUEUES.resets, options, async () => { await deliverResets() })
    await boss.work(QUEUES.daily, options, async () => { await queueDigests('daily') })
    await boss.work(QUEUES.weekly, options, async () => { await queueDigests('weekly') })
    // the sweep catches events whose nudge was lost (e.g. a crash right after the commit)
    await boss.schedule(QUEUES.fanout, '* * * * *')
    await boss.schedule(QUEUES.mentions, '* * * * *')
    await boss.schedule(QUEUES.resets, '* * * * *')
    await boss.schedule(QUEUES.daily, '0 7 * * *')
    await boss.schedule(QUEUES.weekly, '0 7 * * 1')
    await boss.send(QUEUES.fanout, {})
    await boss.send(QUEUES.mentions, {})
    await boss.send(QUEUES.resets, {})
  }
  start().catch(err => console.error('[queue] could not start; e-mail is not being sent:', err.message))

  nitroApp.hooks.hook('close', async () => { await stopQueue() })
})
