import { MAILDEV_URL } from './env'

export interface CapturedMail {
  id: string
  subject: string
  text?: string
  html?: string
  to: { address: string, name?: string }[]
  headers: Record<string, string>
}

export async function listMail(): Promise<CapturedMail[]> {
  const res = await fetch(`${MAILDEV_URL}/api/email`)
  if (!res.ok) throw new Error(`maildev answered ${res.status}`)
  return await res.json() as CapturedMail[]
}

/** Waits for a message to `address` whose subject matches, and returns it. */
export async function waitForMail(address: string, subject: RegExp | string = /.*/, timeoutMs = 10_000): Promise<CapturedMail> {
  const deadline = Date.now() + timeoutMs
  const want = typeof subject === 'string' ? new RegExp(subject) : subject
  while (Date.now() < deadline) {
    const found = (await listMail()).filter(m =>
      m.to.some(t => t.address.toLowerCase() === address.toLowerCase()) && want.test(m.subject))
    if (found.length) return found.at(-1)!
    await new Promise(r => setTimeout(r, 150))
  }
  throw new Error(`no e-mail to ${address} matching ${want} within ${timeoutMs} ms`)
}

export async function mailTo(address: string): Promise<CapturedMail[]> {
  return (await listMail()).filter(m => m.to.some(t => t.address.toLowerCase() === address.toLowerCase()))
}

/** The first link in a message's text that points into the app. */
export function linkIn(mail: CapturedMail, pathPart: string): string {
  const m = (mail.text ?? '').match(new RegExp(`https?://\\S*${pathPart}\\S*`))
  if (!m) throw new Error(`no link containing ${pathPart} in "${mail.subject}"`)
  return m[0]
}

/** A header of the message as sent (maildev's parsed headers leave some out), from its raw source. */
export async function rawHeader(mail: CapturedMail, name: string): Promise<string | undefined> {
  const source = await (await fetch(`${MAILDEV_URL}/api/email/${mail.id}/source`)).text()
  const head = source.split(/\r?\n\r?\n/)[0]!.replace(/\r?\n[ \t]+/g, ' ')
  const line = head.split(/\r?\n/).find(l => l.toLowerCase().startsWith(`${name.toLowerCase()}:`))
  return line?.slice(name.length + 1).trim()
}
