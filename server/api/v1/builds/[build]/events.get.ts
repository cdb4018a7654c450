import { z } from 'zod'

const Query = z.object({ limit: z.coerce.number().int().min(1).max(500).default(100) })

export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { limit } = queryAs(event, Query)
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
