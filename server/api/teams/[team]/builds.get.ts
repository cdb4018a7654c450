import { z } from 'zod'

const Query = z.object({
  // 1: archived builds too, each with its `archived` flag
  archived: z.enum(['0', '1'], { error: 'archived is 0 or 1' }).optional(),
})

export default defineEventHandler(async (event) => {
  const { team } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'reviewer')
  const { archived } = queryAs(event, Query)
  return await listBuildHealth(useDb(), team.id, archived === '1')
})
