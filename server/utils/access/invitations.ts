import type { Knex } from 'knex'
import type { Role } from '#shared/utils/roles'
import { ROLE_LABELS } from '#shared/utils/roles'
import { invitationEmail } from '~~/email/invitation'
import type { Actor } from '../audit'

const INVITATION_DAYS = 7

/** Gives the invitation a fresh token and expiry, and e-mails the link from `actor` (the inviter). */
export async function issueInvitation(trx: Knex.Transaction, actor: Actor, p: {
  invitationId: string
  email: string
  role: Role
  team: { id: string, name: string }
}) {
  const token = newToken()
  await trx('invitations').where({ id: p.invitationId }).update({
    token_hash: hashToken(token),
    expires_at: trx.raw(`now() + make_interval(days => ?)`, [INVITATION_DAYS]),
    updated_at: trx.fn.now(),
  })
  // sent inside the transaction: if the mail server refuses, nothing is recorded
  try {
    await sendMail({
      to: p.email,
      ...invitationEmail({ teamName: p.team.name, inviterName: actor.name, roleLabel: ROLE_LABELS[p.role], link: appLink(`/invitations/${token}`) }),
    })
  }
  catch {
    throw createError({ statusCode: 503, message: 'The invitation e-mail could not be sent; try again later' })
  }
}
