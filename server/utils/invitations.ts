import type { H3Event } from 'h3'
import type { Knex } from 'knex'
import type { Role } from '#shared/utils/roles'
import { ROLE_LABELS } from '#shared/utils/roles'
import { invitationEmail } from '~~/email/invitation'

const INVITATION_DAYS = 7

/** Gives the invitation a fresh token and expiry, and e-mails the link. */
export async function issueInvitation(event: H3Event, trx: Knex.Transaction, p: {
  invitationId: string
  email: string
  role: Role
  team: { id: string, name: string }
  inviter: { name: string }
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
      ...invitationEmail({ teamName: p.team.name, inviterName: p.inviter.name, roleLabel: ROLE_LABELS[p.role], link: appLink(`/invitations/${token}`) }),
    })
  }
  catch {
    throw createError({ statusCode: 503, message: 'The invitation e-mail could not be sent; try again later' })
  }
}
