import { renderEmail } from './layout'

/** Proves the mail path: sent by an Owner from team settings. */
export function testMessage(p: { teamName: string, senderName: string }) {
  return renderEmail(
    'Ratchet test message',
    'Mail from Ratchet reaches you',
    [
      { text: `${p.senderName} sent this test message from the settings of ${p.teamName}. If you can read it, Ratchet's e-mail settings work.` },
      { note: 'You need not do anything.' },
    ],
  )
}
