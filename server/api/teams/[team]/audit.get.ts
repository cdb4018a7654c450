import { z } from 'zod'

const Query = z.object({
  page: z.coerce.number().int().min(1).max(10_000).default(1),
  perPage: z.coerce.number().int().min(1).max(200).default(50),
})

export default defineEventHandler(async (event) => {
  const { team } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'owner')
  const { page, perPage } = queryAs(event, Query)
  const db = useDb()
  // the team's own entries, and the account events (sign-ins, failed sign-ins, resets) of its members
  const scoped = () => db('audit_log').where(q => q
    .where('team_id', team.id)
    .orWhere(q2 => q2.whereNull('team_id').whereIn('actor_id', db('memberships').where('team_id', team.id).select('user_id'))))
  const [rows, count] = await Promise.all([
    scoped().orderBy('id', 'desc').limit(perPage).offset((page - 1) * perPage)
      .select('id', 'action', 'actor_label as actor', 'detail', 'ip', 'user_agent as userAgent', 'at'),
    scoped().count({ total: '*' }).first(),
  ])
  return { page, perPage, total: Number(count?.total ?? 0), entries: rows }
})
