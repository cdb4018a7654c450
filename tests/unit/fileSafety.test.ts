import { describe, expect, it } from 'vitest'
import { etagMatches, parseRange } from '#shared/utils/byteRanges'
import { deliveryOf, kindOf, sniffTextType } from '#shared/utils/contentTypes'
import { contentDisposition, formatBytes, sanitizeFileName } from '#shared/utils/fileNames'

describe('sanitizeFileName', () => {
  it.each([
    ['../../etc/passwd', 'passwd'],
    ['..\\x', 'x'],
    ['/etc/shadow', 'shadow'],
    ['C:\\Windows\\System32\\drivers\\etc\\hosts', 'hosts'],
    ['report\u0000.html.png', 'report.html.png'],
    ['..', 'file'],
    ['.', 'file'],
    ['', 'file'],
    ['   ', 'file'],
    ['dyno run 3.csv', 'dyno run 3.csv'],
    ['trailing dots...', 'trailing dots'],
    ['a<b>c:d"e|f?g*h.txt', 'a_b_c_d_e_f_g_h.txt'],
    ['CON.txt', '_CON.txt'],
    // a right-to-left override would show "photoexe.jpg"
    ['photo\u202Egpj.exe', 'photogpj.exe'],
    ['Messung Drehmoment °C.csv', 'Messung Drehmoment °C.csv'],
    ['e\u0301te\u0301.jpg', 'été.jpg'],
  ])('%j → %j', (raw, shown) => {
    expect(sanitizeFileName(raw)).toBe(shown)
  })

  it('keeps the extension when it shortens a long name', () => {
    const name = sanitizeFileName(`${'x'.repeat(300)}.mp4`)
    expect(name.length).toBe(200)
    expect(name.endsWith('.mp4')).toBe(true)
  })
})

describe('contentDisposition (RFC 6266, RFC 8187)', () => {
  it.each([
    ['attachment', 'log.txt', 'attachment; filename="log.txt"'],
    ['inline', 'clip 1.mp4', 'inline; filename="clip 1.mp4"'],
    // the RFC 8187 example value for "€ rates" is UTF-8''%e2%82%ac%20rates (hex case is free)
    ['attachment', '€ rates', 'attachment; filename="_ rates"; filename*=UTF-8\'\'%E2%82%AC%20rates'],
    ['attachment', 'Prüfstand.csv', 'attachment; filename="Prufstand.csv"; filename*=UTF-8\'\'Pr%C3%BCfstand.csv'],
    ['attachment', '50%"quoted".txt', 'attachment; filename="50__quoted_.txt"; filename*=UTF-8\'\'50%25_quoted_.txt'],
    ['attachment', '../../etc/passwd', 'attachment; filename="passwd"'],
  ] as const)('%s %j', (type, name, header) => {
    expect(contentDisposition(type, name)).toBe(header)
  })
})

describe('parseRange (RFC 9110 §14.1.2)', () => {
  // the examples of §14.1.2 on a 10000-byte representation
  it.each([
    ['bytes=0-499', { start: 0, end: 499 }],
    ['bytes=500-999', { start: 500, end: 999 }],
    ['bytes=-500', { start: 9500, end: 9999 }],
    ['bytes=9500-', { start: 9500, end: 9999 }],
    ['bytes=0-0', { start: 0, end: 0 }],
    ['bytes=-1', { start: 9999, end: 9999 }],
    ['bytes=9000-20000', { start: 9000, end: 9999 }],
    ['bytes=-20000', { start: 0, end: 9999 }],
    ['bytes=10000-', 'unsatisfiable'],
    ['bytes=-0', 'unsatisfiable'],
    // ignored: the whole representation is sent
    ['bytes=0-0,-1', null],
    ['bytes=500-100', null],
    ['items=0-5', null],
    ['bytes=abc', null],
    ['', null],
  ] as const)('%s', (header, expected) => {
    expect(parseRange(header, 10000)).toEqual(expected)
  })

  it('finds nothing to send in an empty file', () => {
    expect(parseRange('bytes=0-', 0)).toBe('unsatisfiable')
  })
})

describe('etagMatches', () => {
  it.each([
    ['"abc"', true],
    ['W/"abc"', true],
    ['"x", "abc"', true],
    ['*', true],
    ['"abd"', false],
    ['', false],
  ])('If-None-Match: %s', (header, match) => {
    expect(etagMatches(header, '"abc"')).toBe(match)
  })
})

const bytes = (s: string) => new TextEncoder().encode(s)

describe('sniffTextType', () => {
  it.each([
    ['<!DOCTYPE html><html><body>hi</body></html>', 'notes.txt', 'text/html'],
    ['  <html><script>alert(1)</script>', 'data.csv', 'text/html'],
    ['<!-- comment --><iframe src="x">', 'x.txt', 'text/html'],
    ['<svg xmlns="http://www.w3.org/2000/svg"><script>alert(1)</script></svg>', 'logo.png', 'image/svg+xml'],
    ['<?xml version="1.0"?><root/>', 'export.txt', 'application/xml'],
    ['plain words', 'page.html', 'text/html'],
    ['time,torque\n0,41.2\n', 'run.csv', 'text/csv'],
    ['{"a": 1}', 'cfg.json', 'application/json'],
    ['G1 X10 Y10\n', 'part.gcode', 'text/plain'],
    ['speed\u0000\u0001\u0002', 'dump.bin', 'application/octet-stream'],
  ])('%j named %s', (text, name, type) => {
    expect(sniffTextType(bytes(text), name)).toBe(type)
  })

  it('accepts a sample that ends inside a multi-byte character', () => {
    const b = bytes('temperature °C\n12')
    const cut = bytes('unit °')
    expect(sniffTextType(b, 'a.csv')).toBe('text/csv')
    expect(sniffTextType(cut.subarray(0, cut.length - 1), 'a.txt')).toBe('text/plain')
  })

  it('reads Latin-1 text as text', () => {
    expect(sniffTextType(Uint8Array.from([0x54, 0x20, 0xB0, 0x43, 0x0A]), 'log.txt')).toBe('text/plain')
  })
})

describe('deliveryOf', () => {
  it.each([
    ['image/png', 'a.png', false, { disposition: 'inline', contentType: 'image/png', sandbox: true }],
    ['video/mp4', 'run.mp4', false, { disposition: 'inline', contentType: 'video/mp4', sandbox: true }],
    ['application/pdf', 'spec.pdf', false, { disposition: 'inline', contentType: 'application/pdf', sandbox: false }],
    ['text/csv', 'a.csv', false, { disposition: 'inline', contentType: 'text/csv; charset=utf-8', sandbox: true }],
    ['text/csv', 'a.csv', true, { disposition: 'attachment', contentType: 'text/csv; charset=utf-8', sandbox: true }],
    ['application/zip', 'cad.zip', false, { disposition: 'attachment', contentType: 'application/zip', sandbox: true }],
    ['text/html', 'x.html', false, { disposition: 'attachment', contentType: 'application/octet-stream', sandbox: true }],
    ['image/svg+xml', 'x.svg', false, { disposition: 'attachment', contentType: 'application/octet-stream', sandbox: true }],
    ['application/xml', 'x.xml', false, { disposition: 'attachment', contentType: 'application/octet-stream', sandbox: true }],
    ['text/javascript', 'x.js', false, { disposition: 'attachment', contentType: 'application/octet-stream', sandbox: true }],
    // a text file named .html is still a download
    ['text/plain', 'x.html', false, { disposition: 'attachment', contentType: 'application/octet-stream', sandbox: true }],
  ] as const)('%s named %s (download: %s)', (type, name, download, expected) => {
    expect(deliveryOf(type, name, download)).toEqual(expected)
  })

  it.each([
    ['image/jpeg', 'image'], ['image/svg+xml', 'other'], ['video/webm', 'video'], ['audio/mpeg', 'audio'],
    ['application/pdf', 'pdf'], ['text/csv', 'text'], ['text/html', 'other'], ['application/zip', 'other'],
  ])('kindOf(%s) is %s', (type, kind) => {
    expect(kindOf(type)).toBe(kind)
  })
})

describe('formatBytes', () => {
  it.each([[0, '0 B'], [999, '999 B'], [1000, '1.00 kB'], [1_234_567, '1.23 MB'], [60_000_000, '60.0 MB'], [200_000_000, '200 MB'], [10e9, '10.0 GB']])('%d → %s', (n, text) => {
    expect(formatBytes(n)).toBe(text)
  })
})
