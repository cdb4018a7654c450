import type { H3Event } from 'h3'
import type { z } from 'zod'

/** Builds of the caller's teams (or the one build of a rig token), newest first. */
export async function listVisibleBuilds(event: H3Event) {
  const db = useDb()
  const bearer = bearerToken(event)
  const q = db('builds').join('teams', 'teams.id', 'builds.team_id')
    .whereNull('builds.archived_at')
    .orderBy('builds.created_at', 'desc')
    .select('builds.id', 'builds.name', 'builds.slug', 'builds.summary', 'builds.created_at as createdAt',
      'teams.id as teamId', 'teams.slug as teamSlug', 'teams.name as teamName')
  if (bearer) {
    const token = await useRigToken(event, bearer)
    return await q.where('builds.id', token.build_id)
  }
  const user = await requireUser(event)
  return await q.join('memberships', 'memberships.team_id', 'builds.team_id')
    .where('memberships.user_id', user.id)
    .select('memberships.role')
}

export async function createBuild(event: H3Event, body: z.output<typeof BuildBody>) {
  const { team, user } = await requireTeamRole(event, body.team, 'engineer')
  const build = await useDb().transaction(async (trx) => {
    const slug = body.slug ?? await uniqueSlug(trx, 'builds', slugify(body.name))
    if (body.slug && await trx('builds').where({ slug }).first('id')) {
      throw createError({ statusCode: 409, message: `A build with the slug "${slug}" exists; choose another`, data: { fields: { slug: 'Taken' } } })
    }
    const [build] = await trx('builds').insert({ team_id: team.id, name: body.name, slug, summary: body.summary ?? '', created_by: user.id })
      .returning(['id', 'name', 'slug', 'summary', 'created_at as createdAt'])
    await audit(event, { action: 'build.created', teamId: team.id, actorId: user.id, actorLabel: user.email, detail: { build: slug } }, trx)
    return build
  })
  return { ...build, teamId: team.id, teamSlug: team.slug }
}
