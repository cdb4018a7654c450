import { describe, expect, it } from 'vitest'
import { abilitiesOf } from '../../../utils/abilities'

describe('abilitiesOf: what a role may do on a build (the role matrix of tests/support/routeTable.ts)', () => {
  it.each([
    ['owner', true, true, true],
    ['engineer', true, false, false],
    ['reviewer', false, true, false],
    [null, false, false, false],
    [undefined, false, false, false],
  ] as const)('%s: edit %s, sign off %s, reopen %s', (role, edit, signOff, reopen) => {
    const a = abilitiesOf(role)
    expect({ edit: a.edit, signOff: a.signOff, reopen: a.reopen }).toEqual({ edit, signOff, reopen })
    // a reason exactly where the ability is missing
    expect(a.why.edit === '').toBe(edit)
    expect(a.why.signOff === '').toBe(signOff)
    expect(a.why.reopen === '').toBe(reopen)
  })

  it('says who can do what is missing', () => {
    expect(abilitiesOf('reviewer').why.edit).toMatch(/only Engineers and Owners change data/)
    expect(abilitiesOf('engineer').why.signOff).toMatch(/a Reviewer or an Owner does/)
    expect(abilitiesOf('engineer').why.reopen).toMatch(/Only an Owner/)
  })
})
