// Ratchet's e-mail frame: plain HTML with inline styles (mail clients ignore style sheets),
// and the same content as plain text.

export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, c => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', '\'': '&#39;' })[c]!)
}

export interface EmailBlock {
  /** a paragraph of text */
  text?: string
  /** a call to action */
  button?: { label: string, href: string }
  /** a small note under the rest */
  note?: string
}

export interface RenderedEmail {
  subject: string
  text: string
  html: string
}

export function renderEmail(subject: string, heading: string, blocks: EmailBlock[]): RenderedEmail {
  const textParts = [heading, '']
  const htmlParts: string[] = []
  for (const b of blocks) {
    if (b.text) {
      textParts.push(b.text, '')
      htmlParts.push(`<p style="margin:0 0 16px;font-size:15px;line-height:1.55;color:#2e2d29">${escapeHtml(b.text)}</p>`)
    }
    if (b.button) {
      textParts.push(`${b.button.label}: ${b.button.href}`, '')
      htmlParts.push(`<p style="margin:24px 0"><a href="${escapeHtml(b.button.href)}" style="display:inline-block;background:#127d74;color:#ffffff;text-decoration:none;font-weight:700;padding:10px 18px;border-radius:6px">${escapeHtml(b.button.label)}</a></p>`)
    }
    if (b.note) {
      textParts.push(b.note, '')
      htmlParts.push(`<p style="margin:0 0 12px;font-size:13px;color:#79756a">${escapeHtml(b.note)}</p>`)
    }
  }
  textParts.push('— Ratchet')
  const html = `<!doctype html><html><body style="margin:0;background:#f7f7f5;font-family:Manrope,Segoe UI,Helvetica,Arial,sans-serif">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0"><tr><td align="center" style="padding:32px 16px">
<table role="presentation" width="560" cellpadding="0" cellspacing="0" style="max-width:560px;background:#ffffff;border-radius:14px;border:1px solid #dcdad3">
<tr><td style="padding:20px 28px;border-bottom:3px solid #1a9c8e;font-weight:700;font-size:18px;color:#1d1c1a">ratchet</td></tr>
<tr><td style="padding:28px">
<h1 style="margin:0 0 18px;font-size:20px;color:#1d1c1a">${escapeHtml(heading)}</h1>
${htmlParts.join('\n')}
</td></tr></table></td></tr></table></body></html>`
  return { subject, text: textParts.join('\n'), html }
}
