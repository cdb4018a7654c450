/**
 * Classes for a table that turns into stacked rows on a phone: below the `sm` width each row is a
 * block whose cells stand one under the other, each led by its column's name (a `STACKED.label`
 * span), so no column is clipped or scrolled out of sight; from `sm` up it is an ordinary table.
 * A table whose display changes loses its table semantics in some browsers, so the markup using
 * these also states the roles (table, rowgroup, row, columnheader, rowheader, cell).
 */
export const STACKED = {
  table: 'block w-full sm:table',
  /** the header row: read by screen readers everywhere, seen from `sm` up */
  head: 'sr-only sm:not-sr-only sm:table-header-group',
  body: 'block sm:table-row-group',
  row: 'block py-2 sm:table-row sm:py-0',
  /** a cell: on a phone its label on the left, its content on the right */
  cell: 'flex items-center justify-between gap-3 py-1 text-right sm:table-cell sm:text-left',
  /** the column's name inside a cell, shown on a phone only (the header says it from `sm` up) */
  label: 'text-xs font-semibold uppercase tracking-wide text-ink-600 dark:text-ink-300 sm:hidden',
} as const
