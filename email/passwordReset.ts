import { renderEmail } from './layout'

export function passwordResetEmail(p: { name: string, link: string }) {
  return renderEmail(
    'Choose a new Ratchet password',
    `Hello ${p.name}`,
    [
      { text: 'Someone asked to reset the password of your Ratchet account. If it was you, choose a new password with this link. It works once, for one hour.' },
      { button: { label: 'Choose a new password', href: p.link } },
      { note: 'If you did not ask for this, ignore this message: your password stays as it is. Choosing a new password signs you out everywhere else.' },
    ],
  )
}
