import { describe, expect, it } from 'vitest'
import { cardKeyAction } from '../../../utils/cardKeys'

const press = (key: string, mods: { alt?: boolean, shift?: boolean, ctrl?: boolean, meta?: boolean } = {}) =>
  ({ key, altKey: Boolean(mods.alt), shiftKey: Boolean(mods.shift), ctrlKey: Boolean(mods.ctrl), metaKey: Boolean(mods.meta) })

describe('cardKeyAction: what a key press on a focused card asks for', () => {
  it.each([
    [press('ArrowUp'), { kind: 'focus', dir: 'up' }],
    [press('ArrowRight'), { kind: 'focus', dir: 'right' }],
    [press('ArrowUp', { alt: true }), { kind: 'step', step: 'up' }],
    [press('ArrowDown', { alt: true }), { kind: 'step', step: 'down' }],
    [press('ArrowUp', { alt: true, shift: true }), { kind: 'step', step: 'top' }],
    [press('ArrowDown', { alt: true, shift: true }), { kind: 'step', step: 'bottom' }],
    [press('ArrowLeft', { alt: true }), { kind: 'lane', dir: -1 }],
    [press('ArrowRight', { alt: true }), { kind: 'lane', dir: 1 }],
    [press('ContextMenu'), { kind: 'menu' }],
    [press('F10', { shift: true }), { kind: 'menu' }],
    [press('Home'), { kind: 'focus', dir: 'first' }],
    [press('End'), { kind: 'focus', dir: 'last' }],
  ])('%j → %j', (e, action) => {
    expect(cardKeyAction(e)).toEqual(action)
  })

  it.each([
    press('Enter'),
    press('a'),
    press('F10'),
    press('ArrowUp', { shift: true }), // Shift alone selects text elsewhere: not a board key
    press('ArrowLeft', { alt: true, shift: true }),
    press('ArrowDown', { ctrl: true, alt: true }), // the system's and the browser's
    press('ArrowDown', { meta: true }),
    press('Home', { shift: true }), // selects text: not a board key
    press('End', { alt: true }),
  ])('%j → nothing', (e) => {
    expect(cardKeyAction(e)).toBeNull()
  })
})
