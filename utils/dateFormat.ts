/** "3 Mar 2026", or "3 Mar 2026, 14:05 UTC" with the time; '—' for none. */
export function formatDate(iso: string | null | undefined, withTime = false): string {
  if (!iso) return '—'
  const d = new Date(iso)
  if (Number.isNaN(d.getTime())) return iso
  // fixed locale and zone so the server and the browser render the same text
  return d.toLocaleString('en-GB', {
    day: 'numeric', month: 'short', year: 'numeric',
    ...(withTime ? { hour: '2-digit', minute: '2-digit' } : {}),
    timeZone: 'UTC',
  }) + (withTime ? ' UTC' : '')
}
