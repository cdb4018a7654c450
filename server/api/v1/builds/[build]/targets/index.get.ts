import { z } from 'zod'

const Query = z.object({
  archived: z.enum(['0', '1'], { error: 'archived is 0 or 1' }).optional(),
})

export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { archived } = queryAs(event, Query)
  const q = useDb()('targets').where({ build_id: build.id }).orderBy([{ column: 'position' }, { column: 'key' }])
  if (archived !== '1') q.whereNull('archived_at')
  return (await q).map(targetView)
})
