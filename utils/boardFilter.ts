import type { FindingCard } from '#shared/types/findings'
import type { Severity } from '#shared/utils/lanes'

export interface BoardFilter {
  severity: Severity | ''
  target: string
  owner: string
  revision: string
  text: string
}

export const NO_FILTER: Readonly<BoardFilter> = Object.freeze({ severity: '', target: '', owner: '', revision: '', text: '' })

/** True when a card passes every filter that is set. */
export function matchesFilter(c: FindingCard, f: BoardFilter): boolean {
  if (f.severity && c.severity !== f.severity) return false
  if (f.target && !c.targets.includes(f.target)) return false
  if (f.owner && !c.fixes.some(x => x.owner?.id === f.owner)) return false
  if (f.revision && c.seenOn !== f.revision) return false
  const text = f.text.trim().toLowerCase()
  if (text && !c.title.toLowerCase().includes(text) && !c.description.toLowerCase().includes(text)) return false
  return true
}
