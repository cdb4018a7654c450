import type { z } from 'zod'
import type { TeamRow } from '../../db/tables'
import type { Actor } from '../audit'
import type { Db } from '../db'

// Builds: the ones a caller sees, and a new one.

/**
 * Builds of the caller's teams (`userId`), or the one build of a rig token (`buildId`), newest
 * first; the handler says which.
 */
export async function listVisibleBuilds(db: Db, viewer: { userId: string } | { buildId: string }) {
  const q = db('builds').join('teams', 'teams.id', 'builds.team_id')
    .whereNull('builds.archived_at')
    .orderBy('builds.created_at', 'desc')
    .select('builds.id', 'builds.name', 'builds.slug', 'builds.summary', 'builds.created_at as createdAt',
      'teams.id as teamId', 'teams.slug as teamSlug', 'teams.name as teamName')
  if ('buildId' in viewer) return await q.where('builds.id', viewer.buildId)
  return await q.join('memberships', 'memberships.team_id', 'builds.team_id')
    .where('memberships.user_id', viewer.userId)
    .select('memberships.role')
}

/** A new build of `team` (the handler checked the caller's role there). */
export async function createBuild(db: Db, actor: Actor, input: { team: Pick<TeamRow, 'id' | 'slug'>, body: z.output<typeof BuildBody> }) {
  const { team, body } = input
  const build = await db.transaction(async (trx) => {
    const build = await insertWithSlug<{ id: string, name: string, slug: string, summary: string, createdAt: Date }>(trx, 'builds', {
      slug: body.slug,
      base: slugify(body.name),
      row: { team_id: team.id, name: body.name, summary: body.summary ?? '', created_by: actor.userId },
      returning: ['id', 'name', 'slug', 'summary', 'created_at as createdAt'],
      taken: 'A build with the slug "%s" exists; choose another',
    })
    await recordAudit(trx, actor, { action: 'build.created', teamId: team.id, detail: { build: build.slug } })
    return build
  })
  return { ...build, teamId: team.id, teamSlug: team.slug }
}
