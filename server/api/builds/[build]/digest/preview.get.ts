// The caller's next digest of this build, as it would be sent now.
export default defineEventHandler(async (event) => {
  const { build, user } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer')
  const db = useDb()
  const sub = await subscriptionOf(db, user!.id, build.id)
  const events = (await loadEvents(db, build.id, { afterId: Number(sub?.digestedThrough ?? 0), limit: 200 })).reverse()
  const period = sub?.frequency === 'weekly' ? 'weekly' : 'daily'
  const message = events.length ? renderDigest({ build, recipient: { id: user!.id, name: user!.name }, events, period }) : null
  return { frequency: sub?.frequency ?? 'off', events: events.length, subject: message?.subject ?? null, html: message?.html ?? null, text: message?.text ?? null }
})
