import type { Knex } from 'knex'
import type { InvitationRow } from '../../db/tables'
import type { Actor } from '../audit'
import type { Db } from '../db'

export function assertPasswordAcceptable(password: string) {
  if (isCommonPassword(password)) {
    throw createError({
      statusCode: 400,
      message: 'password: This password is on the list of common passwords; choose another',
      data: { fields: { password: 'This password is on the list of common passwords; choose another' } },
    })
  }
}

/** A slug that no other row of `table` uses yet: base, base-2, base-3 … */
export async function uniqueSlug(db: Db, table: 'teams' | 'builds', base: string): Promise<string> {
  const taken = new Set(await db(table).where('slug', base).orWhere('slug', 'like', `${base}-%`).pluck('slug'))
  if (!taken.has(base)) return base
  for (let i = 2; ; i++) {
    if (!taken.has(`${base}-${i}`)) return `${base}-${i}`
  }
}

export async function createTeam(trx: Knex.Transaction, p: { name: string, slug?: string, ownerId: string, personal?: boolean }) {
  const slug = p.slug
    ? p.slug
    : await uniqueSlug(trx, 'teams', slugify(p.name))
  if (p.slug && await trx('teams').where({ slug }).first('id')) {
    throw createError({ statusCode: 409, message: `The address "${slug}" is taken; choose another`, data: { fields: { slug: 'Taken' } } })
  }
  const team = theRow(await trx('teams').insert({ name: p.name, slug, personal: p.personal ?? false }).returning(['id', 'name', 'slug', 'personal']))
  await trx('memberships').insert({ team_id: team.id, user_id: p.ownerId, role: 'owner' })
  return team
}

/** A pending invitation by the token in its link, or a 404/410 saying why it can't be used. */
export async function findUsableInvitation(db: Db, token: string, forUpdate = false): Promise<InvitationRow> {
  const q = db('invitations').where({ token_hash: hashToken(token) }).first()
  const inv = await (forUpdate ? q.forUpdate() : q)
  if (!inv || inv.cancelled_at) throw createError({ statusCode: 404, message: 'This invitation link is not valid' })
  if (inv.accepted_at) throw createError({ statusCode: 410, message: 'This invitation has already been used' })
  if (new Date(inv.expires_at).getTime() < Date.now()) throw createError({ statusCode: 410, message: 'This invitation has expired; ask for a new one' })
  return inv
}

/** Joins `actor` (signed in as `email`) to the invitation's team. */
export async function acceptInvitation(trx: Knex.Transaction, actor: Actor, input: { token: string, email: string }) {
  const user = { id: actor.userId!, email: input.email }
  const inv = await findUsableInvitation(trx, input.token, true)
  if (inv.email.toLowerCase() !== user.email.toLowerCase()) {
    throw createError({ statusCode: 403, message: `This invitation is for ${inv.email}; sign in with that address to accept it` })
  }
  const existing = await trx('memberships').where({ team_id: inv.team_id, user_id: user.id }).first('role')
  if (!existing) {
    await trx('memberships').insert({ team_id: inv.team_id, user_id: user.id, role: inv.role })
  }
  await trx('invitations').where({ id: inv.id }).update({ accepted_at: trx.fn.now(), accepted_by: user.id, updated_at: trx.fn.now() })
  await recordAudit(trx, actor, { action: 'invitation.accepted', teamId: inv.team_id, detail: { email: inv.email, role: existing?.role ?? inv.role } })
  return await trx('teams').where({ id: inv.team_id }).first('id', 'name', 'slug')
}
