import { renderEmail } from './layout'

/** "Someone mentioned you" on a finding, with the comment's text. */
export function mentionEmail(p: { authorName: string, findingTitle: string, buildName: string, comment: string, link: string }) {
  const excerpt = p.comment.length > 600 ? `${p.comment.slice(0, 600)}…` : p.comment
  return renderEmail(
    `${p.authorName} mentioned you on “${p.findingTitle}”`,
    `${p.authorName} mentioned you`,
    [
      { text: `On the finding “${p.findingTitle}” of ${p.buildName}:` },
      { text: excerpt },
      { button: { label: 'Open the finding', href: p.link } },
      { note: 'You get this e-mail because a member of your team mentioned you in a comment.' },
    ],
  )
}
