import { describe, expect, it } from 'vitest'
import { findMentions, renderMarkdown } from '../../server/utils/findings/markdown'

// Markdown of descriptions and comments goes through a strict allow-list: formatting stays,
// anything that could run (script, event handlers, javascript: links, frames, styles) goes.

describe('renderMarkdown', () => {
  it.each([
    ['**bold** and _em_', '<p><strong>bold</strong> and <em>em</em></p>'],
    ['`<script>` stays text in code', '<p><code>&lt;script&gt;</code> stays text in code</p>'],
    ['# Heading', '<h3>Heading</h3>'],
    ['- one\n- two', '<ul>\n<li>one</li>\n<li>two</li>\n</ul>'],
  ])('renders %j', (source, html) => {
    expect(renderMarkdown(source).trim()).toBe(html)
  })

  it.each([
    '<script>window.__pwned = 1</script>',
    '<img src=x onerror="window.__pwned = 1">',
    '<a href="javascript:window.__pwned=1">click</a>',
    '[click](javascript:window.__pwned=1)',
    '<svg onload="window.__pwned=1"></svg>',
    '<iframe src="data:text/html,<script>parent.__pwned=1</script>"></iframe>',
    '<p style="background:url(javascript:x)" onclick="window.__pwned=1">hi</p>',
    '<details open ontoggle="window.__pwned=1">x</details>',
  ])('leaves nothing that runs in %j', (payload) => {
    const html = renderMarkdown(`before ${payload} after`)
    expect(html).not.toMatch(/<script|<img|<svg|<iframe|<details|\son\w+=|javascript:|style=/i)
    expect(html).toContain('before')
    expect(html).toContain('after')
  })

  it('keeps safe links and marks them', () => {
    expect(renderMarkdown('[datasheet](https://example.test/ds.pdf)')).toBe('<p><a href="https://example.test/ds.pdf" rel="nofollow noopener noreferrer">datasheet</a></p>\n')
  })

  it('renders an empty source as nothing', () => {
    expect(renderMarkdown('  \n ')).toBe('')
  })
})

describe('findMentions', () => {
  const team = [
    { id: 'u1', name: 'Bram Lindqvist (demo)', email: 'engineer@demo.test' },
    { id: 'u2', name: 'Chiara Voss (demo)', email: 'engineer2@demo.test' },
    { id: 'u3', name: 'Chiara Ruiz', email: 'cr@demo.test' },
    { id: 'u4', name: 'Ada Okafor (demo)', email: 'owner@demo.test' },
  ]

  it.each([
    ['@Bram can you check the connector?', ['u1']],
    ['ask @bram lindqvist and @Ada', ['u1', 'u4']],
    ['@Chiara Voss measured it', ['u2']],
    // two Chiaras: a first name alone is ambiguous and mentions nobody
    ['@Chiara please', []],
    ['@engineer2 by e-mail handle', ['u2']],
    ['mail owner@demo.test is not a mention', []],
    ['@Bramble is someone else', []],
    ['@Bram, @Bram again', ['u1']],
    ['(@Ada) in brackets', ['u4']],
  ])('%j mentions %j', (text, ids) => {
    expect(findMentions(text, team)).toEqual(ids)
  })
})
