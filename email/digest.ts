import { escapeHtml } from './layout'

// The reviewers' e-mail: one build, the events since the last one, in Ratchet's look.

export interface DigestEvent {
  id: number
  type: 'target.met' | 'target.slipped' | 'finding.safety' | 'revision.frozen'
  at: string
  target: { key: string, name: string } | null
  revision: { label: string, changes: string[] } | null
  finding: { id: string, title: string } | null
  before: { status: string, mean?: number | null, ci95?: [number, number] | null, revision?: string, unit?: string } | null
  after: { status: string, mean?: number | null, ci95?: [number, number] | null, revision?: string, unit?: string } | null
  detail: { reasons?: string[] }
}

export interface DigestInput {
  build: { name: string, slug: string }
  recipientName: string
  events: DigestEvent[]
  /** 'immediate' for one event, or the digest's period */
  period: 'immediate' | 'daily' | 'weekly' | 'now'
  links: { build: string, settings: string, unsubscribe: string, app: (path: string) => string }
}

const STATUS_WORD: Record<string, string> = { met: 'Met', marginal: 'Marginal', short: 'Short', untested: 'Untested' }

function num(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—'
  const a = Math.abs(v)
  return a !== 0 && (a < 0.01 || a >= 1e6) ? v.toExponential(3) : Number(v.toPrecision(4)).toString()
}

function side(s: DigestEvent['before']): string {
  if (!s || s.status === 'untested' || s.mean === undefined || s.mean === null) return 'Untested'
  const half = s.ci95 ? ` ± ${num((s.ci95[1] - s.ci95[0]) / 2)}` : ''
  return `${num(s.mean)}${half} ${s.unit ?? ''} (${STATUS_WORD[s.status] ?? s.status}${s.revision ? `, ${s.revision}` : ''})`.replace(/\s+\(/, ' (')
}

function slipWhy(e: DigestEvent): string {
  const r = e.detail.reasons ?? []
  const parts = []
  if (r.includes('status')) parts.push('no longer Met')
  if (r.includes('movement')) parts.push('a real change in the wrong direction (beyond the scatter of the readings)')
  return parts.join(', and ')
}

function lines(e: DigestEvent): { title: string, body: string, link: string } {
  const app = (p: string) => p
  switch (e.type) {
    case 'target.met':
      return { title: `Met: ${e.target?.name}`, body: `${side(e.before)} → ${side(e.after)}`, link: app(`targets/${e.target?.key}`) }
    case 'target.slipped':
      return { title: `Slipped: ${e.target?.name}`, body: `${side(e.before)} → ${side(e.after)} — ${slipWhy(e)}`, link: app(`targets/${e.target?.key}`) }
    case 'finding.safety':
      return { title: `Safety finding: ${e.finding?.title}`, body: `Seen on ${e.revision?.label ?? 'no revision yet'}. Follow your local codes and licensed practice until it is resolved.`, link: app(`findings/${e.finding?.id}`) }
    case 'revision.frozen':
      return { title: `Signed off: ${e.revision?.label}`, body: e.revision?.changes.length ? `Changes: ${e.revision.changes.join('; ')}` : 'No changes listed.', link: app(`revisions/${encodeURIComponent(e.revision?.label ?? '')}`) }
  }
}

export function digestEmail(p: DigestInput) {
  const n = p.events.length
  const first = p.events[0]
  const subject = p.period === 'immediate' && first
    ? `${p.build.name}: ${lines(first).title}`
    : `${p.build.name}: ${n} ${n === 1 ? 'update' : 'updates'} (${p.period === 'weekly' ? 'weekly' : 'daily'} digest)`

  const groups: [string, DigestEvent['type']][] = [
    ['Targets met', 'target.met'], ['Targets slipped', 'target.slipped'], ['Safety findings', 'finding.safety'], ['Revisions signed off', 'revision.frozen'],
  ]
  const text: string[] = [`Hello ${p.recipientName},`, '', `What changed on ${p.build.name}:`, '']
  const html: string[] = []
  for (const [heading, type] of groups) {
    const items = p.events.filter(e => e.type === type)
    if (!items.length) continue
    text.push(heading.toUpperCase())
    html.push(`<h2 style="margin:22px 0 8px;font-size:15px;color:#47453f;text-transform:uppercase;letter-spacing:.04em">${escapeHtml(heading)}</h2>`)
    for (const e of items) {
      const l = lines(e)
      const href = `${p.links.build}/${l.link}`
      text.push(`- ${l.title}`, `  ${l.body}`, `  ${href}`)
      const colour = type === 'target.met' ? '#2f8f4e' : type === 'revision.frozen' ? '#127d74' : '#c2412d'
      html.push(`<div style="margin:0 0 10px;padding:10px 12px;border-left:4px solid ${colour};background:#f7f7f5;border-radius:4px">
<a href="${escapeHtml(href)}" style="font-weight:700;color:#1d1c1a;text-decoration:none">${escapeHtml(l.title)}</a>
<div style="font-size:14px;color:#47453f;margin-top:4px">${escapeHtml(l.body)}</div></div>`)
    }
    text.push('')
  }
  text.push(`Open the build: ${p.links.build}`, '', `Digest settings: ${p.links.settings}`, `Unsubscribe from ${p.build.name}: ${p.links.unsubscribe}`, '', '— Ratchet')
  const body = `<!doctype html><html><body style="margin:0;background:#f7f7f5;font-family:Manrope,Segoe UI,Helvetica,Arial,sans-serif">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0"><tr><td align="center" style="padding:32px 16px">
<table role="presentation" width="600" cellpadding="0" cellspacing="0" style="max-width:600px;background:#ffffff;border-radius:14px;border:1px solid #dcdad3">
<tr><td style="padding:20px 28px;border-bottom:3px solid #1a9c8e;font-weight:700;font-size:18px;color:#1d1c1a">ratchet</td></tr>
<tr><td style="padding:24px 28px">
<p style="margin:0 0 6px;color:#2e2d29">Hello ${escapeHtml(p.recipientName)},</p>
<p style="margin:0 0 8px;color:#2e2d29">What changed on <a href="${escapeHtml(p.links.build)}" style="color:#127d74;font-weight:700">${escapeHtml(p.build.name)}</a>:</p>
${html.join('\n')}
<p style="margin:26px 0 0;font-size:12px;color:#79756a">You get this because of your digest settings for ${escapeHtml(p.build.name)}.
<a href="${escapeHtml(p.links.settings)}" style="color:#79756a">Change them</a> or <a href="${escapeHtml(p.links.unsubscribe)}" style="color:#79756a">unsubscribe</a>.</p>
</td></tr></table></td></tr></table></body></html>`
  return { subject, text: text.join('\n'), html: body }
}
