import { renderEmail } from './layout'

export function invitationEmail(p: { teamName: string, inviterName: string, roleLabel: string, link: string }) {
  return renderEmail(
    `${p.inviterName} invited you to ${p.teamName} on Ratchet`,
    `Join ${p.teamName}`,
    [
      { text: `${p.inviterName} invited you to the team ${p.teamName} on Ratchet as ${p.roleLabel}. Ratchet keeps the team's build targets, bench readings, findings and fixes in one place.` },
      { button: { label: 'Accept the invitation', href: p.link } },
      { note: 'The link works once and expires in 7 days. If you do not know this team, ignore this message.' },
    ],
  )
}
