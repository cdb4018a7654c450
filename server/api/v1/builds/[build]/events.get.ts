export default defineEventHandler(async (event) => {
  const access = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { build } = access
  return await keptAnswer(event, access, async () => {
    const { limit } = queryAs(event, EventListQuery)
    const events = await loadEvents(useDb(), build.id, { limit })
    return events.map(e => ({
      id: e.id,
      type: e.type,
      at: e.at,
      target: e.target?.key,
      revision: e.revision?.label,
      finding: e.finding?.id,
      before: e.before ?? undefined,
      after: e.after ?? undefined,
      reasons: e.detail.reasons,
      title: e.target?.name ?? e.finding?.title ?? e.revision?.label,
    }))
  })
})
