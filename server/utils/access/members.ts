import type { Knex } from 'knex'

/** Refuses a change that would leave the team without an Owner (409). */
export async function assertKeepsAnOwner(trx: Knex.Transaction, teamId: string, userId: string) {
  // lock the team's owner rows so two concurrent demotions can't both pass
  const owners = await trx('memberships').where({ team_id: teamId, role: 'owner' }).forUpdate().pluck('user_id')
  if (owners.length === 1 && owners[0] === userId) {
    throw createError({ statusCode: 409, message: 'A team needs at least one Owner; make someone else Owner first' })
  }
}
