/** The label after the latest: R4 → R5, "proto 9" → "proto 10"; R1 for the first; '' when the latest ends in no number. */
export function nextRevisionLabel(labels: readonly string[]): string {
  const last = labels[labels.length - 1]
  if (!last) return 'R1'
  const m = /^(.*?)(\d+)$/.exec(last)
  return m ? `${m[1]}${Number(m[2]) + 1}` : ''
}
