import type { H3Event } from 'h3'
import type { Knex } from 'knex'
import type { Role } from '#shared/utils/roles'

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
export async function uniqueSlug(db: Knex | Knex.Transaction, table: 'teams' | 'builds', base: string): Promise<string> {
  const taken = new Set<string>(await db(table).where('slug', base).orWhere('slug', 'like', `${base}-%`).pluck('slug'))
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
  const [team] = await trx('teams').insert({ name: p.name, slug, personal: p.personal ?? false }).returning(['id', 'name', 'slug', 'personal'])
  await trx('memberships').insert({ team_id: team.id, user_id: p.ownerId, role: 'owner' })
  return team as { id: string, name: string, slug: string, personal: boolean }
}

export interface InvitationRow {
  id: string
  team_id: string
  email: string
  role: Role
  expires_at: Date
  accepted_at: Date | null
  cancelled_at: Date | null
}

/** A pending invitation by the token in its link, or a 404/410 saying why it can't be used. */
export async function findUsableInvitation(db: Knex | Knex.Transaction, token: string, forUpdate = false) {
  const q = db('invitations').where({ token_hash: hashToken(token) }).first()
  const inv = (await (forUpdate ? q.forUpdate() : q)) as InvitationRow | undefined
  if (!inv || inv.cancelled_at) throw createError({ statusCode: 404, message: 'This invitation link is not valid' })
  if (inv.accepted_at) throw createError({ statusCode: 410, message: 'This invitation has already been used' })
  if (new Date(inv.expires_at).getTime() < Date.now()) throw createError({ statusCode: 410, message: 'This invitation has expired; ask for a new one' })
  return inv
}

/** Joins the user to the invitation's team (or raises their role to the invited one). */
export async function acceptInvitation(event: H3Event, trx: Knex.Transaction, token: string, user: { id: string, email: string }) {
  const inv = await findUsableInvitation(trx, token, true)
  if (inv.email.toLowerCase() !== user.email.toLowerCase()) {
    throw createError({ statusCode: 403, message: `This invitation is for ${inv.email}; sign in with that address to accept it` })
  }
  const existing = await trx('memberships').where({ team_id: inv.team_id, user_id: user.id }).first('role')
  if (!existing) {
    await trx('memberships').insert({ team_id: inv.team_id, user_id: user.id, role: inv.role })
  }
  await trx('invitations').where({ id: inv.id }).update({ accepted_at: trx.fn.now(), accepted_by: user.id, updated_at: trx.fn.now() })
  await audit(event, { action: 'invitation.accepted', teamId: inv.team_id, actorId: user.id, actorLabel: user.email, detail: { email: inv.email, role: existing?.role ?? inv.role } }, trx)
  return await trx('teams').where({ id: inv.team_id }).first('id', 'name', 'slug')
}
