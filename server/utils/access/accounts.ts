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

/**
 * Inserts a row of `table` under `slug`, or, without one, under a fresh slug made from `base`
 * (base, base-2 …). A slug that a concurrent insert takes between the look and the insert is a
 * 409 when it was asked for, and otherwise skipped for the next free one, never a 500:
 * ON CONFLICT DO NOTHING waits for the other transaction and then inserts nothing.
 */
export async function insertWithSlug<T>(
  trx: Knex.Transaction,
  table: 'teams' | 'builds',
  p: { slug?: string, base: string, row: Record<string, unknown>, returning: string[], taken: string },
): Promise<T> {
  const refuse = (slug: string) => createError({ statusCode: 409, message: p.taken.replace('%s', slug), data: { fields: { slug: 'Taken' } } })
  for (let attempt = 0; attempt < 5; attempt++) {
    const slug = p.slug ?? await uniqueSlug(trx, table, p.base)
    if (p.slug && await trx(table).where({ slug }).first('id')) throw refuse(slug)
    const [row] = await trx(table).insert({ ...p.row, slug }).onConflict('slug').ignore().returning(p.returning)
    if (row) return row as T
    if (p.slug) throw refuse(slug)
  }
  throw createError({ statusCode: 409, message: 'Others are creating the same name right now; try again' })
}

export async function createTeam(trx: Knex.Transaction, p: { name: string, slug?: string, ownerId: string, personal?: boolean }) {
  const team = await insertWithSlug<{ id: string, name: string, slug: string, personal: boolean }>(trx, 'teams', {
    slug: p.slug,
    base: slugify(p.name),
    row: { name: p.name, personal: p.personal ?? false },
    returning: ['id', 'name', 'slug', 'personal'],
    taken: 'The address "%s" is taken; choose another',
  })
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
