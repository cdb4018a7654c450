import { z } from 'zod'

const label = (which: string) => z.string({ error: `Give revision ${which}'s label` }).trim().min(1, `Give revision ${which}'s label`).max(40, 'A label has at most 40 characters')
const Query = z.object({ a: label('A'), b: label('B') })

// Two revisions of the build side by side: every target and the design parameters.
export default defineEventHandler(async (event) => {
  const { build } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer', { allowRigToken: true })
  const { a, b } = queryAs(event, Query)
  return await compareRevisions(useDb(), build, a, b)
})
