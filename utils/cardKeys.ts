// The board's keyboard: with a card focused, arrows move the focus, Alt+arrows move the card.

export type CardStep = 'up' | 'down' | 'top' | 'bottom'
export type FocusDirection = 'up' | 'down' | 'left' | 'right' | 'first' | 'last'

export type CardKeyAction
  = | { kind: 'step', step: CardStep }
    | { kind: 'lane', dir: -1 | 1 }
    | { kind: 'focus', dir: FocusDirection }
    | { kind: 'menu' }

const ARROWS: Record<string, 'up' | 'down' | 'left' | 'right'> = { ArrowUp: 'up', ArrowDown: 'down', ArrowLeft: 'left', ArrowRight: 'right' }

/** What a key press on a focused card asks for, or null when it is not a board key. */
export function cardKeyAction(e: Pick<KeyboardEvent, 'key' | 'altKey' | 'shiftKey' | 'ctrlKey' | 'metaKey'>): CardKeyAction | null {
  if (e.ctrlKey || e.metaKey) return null
  if (e.key === 'ContextMenu' || (e.shiftKey && e.key === 'F10')) return { kind: 'menu' }
  if ((e.key === 'Home' || e.key === 'End') && !e.altKey && !e.shiftKey) return { kind: 'focus', dir: e.key === 'Home' ? 'first' : 'last' }
  const dir = ARROWS[e.key]
  if (!dir) return null
  if (!e.altKey) return e.shiftKey ? null : { kind: 'focus', dir }
  if (dir === 'left' || dir === 'right') return e.shiftKey ? null : { kind: 'lane', dir: dir === 'left' ? -1 : 1 }
  if (e.shiftKey) return { kind: 'step', step: dir === 'up' ? 'top' : 'bottom' }
  return { kind: 'step', step: dir }
}
