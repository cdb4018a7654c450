import { Marked } from 'marked'
import sanitizeHtml from 'sanitize-html'

// Markdown of finding descriptions and comments: the source is stored as written and rendered
// here on every read, then passed through a strict allow-list, so whatever the source holds
// (raw HTML, script, event handlers, javascript: links) reaches the browser as inert text or not
// at all. Pure functions (no database), so they can be tested alone.

const markdown = new Marked({ gfm: true, breaks: true, async: false })

const SANITIZE: sanitizeHtml.IOptions = {
  allowedTags: ['p', 'br', 'strong', 'em', 'del', 'code', 'pre', 'blockquote', 'ul', 'ol', 'li', 'a', 'h3', 'h4', 'h5', 'h6', 'hr', 'table', 'thead', 'tbody', 'tr', 'th', 'td'],
  allowedAttributes: { a: ['href', 'title', 'rel'], ol: ['start'], th: ['align'], td: ['align'] },
  allowedSchemes: ['http', 'https', 'mailto'],
  allowedSchemesAppliedToAttributes: ['href'],
  allowProtocolRelative: false,
  disallowedTagsMode: 'discard',
  // headings sit under the page's own; a first-level heading in a comment would outrank them
  transformTags: {
    h1: 'h3',
    h2: 'h4',
    a: sanitizeHtml.simpleTransform('a', { rel: 'nofollow noopener noreferrer' }),
  },
}

/** Markdown → HTML that is safe to insert into a page. */
export function renderMarkdown(source: string): string {
  if (!source.trim()) return ''
  const html = markdown.parse(source) as string
  return sanitizeHtml(html, SANITIZE)
}

export interface Mentionable { id: string, name: string, email: string }

const WORD = /[\p{L}\p{N}_]/u

/** The ways a member can be written after "@": full name, name without a "(…)" note, e-mail's local part. */
function handlesOf(m: Mentionable, firstNames: Map<string, number>): string[] {
  const name = m.name.trim().toLowerCase()
  const bare = name.replace(/\s*\([^)]*\)\s*$/, '').trim()
  const first = bare.split(/\s+/)[0] ?? ''
  const local = m.email.split('@')[0]!.toLowerCase()
  const out = new Set([name, bare, local])
  // a first name alone only when nobody else in the team shares it
  if (first && firstNames.get(first) === 1) out.add(first)
  out.delete('')
  return [...out]
}

/**
 * The members a text mentions with "@name", in the order they first appear. "@" inside a word
 * (an e-mail address) is not a mention; the longest handle that fits wins ("@Bram Lindqvist"
 * over "@Bram"); a name nobody in the team has is left as text.
 */
export function findMentions(text: string, members: readonly Mentionable[]): string[] {
  const firstNames = new Map<string, number>()
  for (const m of members) {
    const first = m.name.trim().toLowerCase().replace(/\s*\([^)]*\)\s*$/, '').split(/\s+/)[0] ?? ''
    firstNames.set(first, (firstNames.get(first) ?? 0) + 1)
  }
  const handles = members.flatMap(m => handlesOf(m, firstNames).map(h => ({ id: m.id, handle: h })))
    .sort((a, b) => b.handle.length - a.handle.length)
  const lower = text.toLowerCase()
  const found: string[] = []
  for (let i = lower.indexOf('@'); i >= 0; i = lower.indexOf('@', i + 1)) {
    if (i > 0 && WORD.test(lower[i - 1]!)) continue
    const rest = lower.slice(i + 1)
    const hit = handles.find(h => rest.startsWith(h.handle) && !WORD.test(rest[h.handle.length] ?? ' '))
    if (hit && !found.includes(hit.id)) found.push(hit.id)
  }
  return found
}
