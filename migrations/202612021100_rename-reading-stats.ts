import type { Knex } from 'knex'

// A reading's statistics under the same column names as a cell's in cell_stats (n, mean, sd,
// u_a, u_b, u, nu_eff, ci_low, ci_high; all in SI), so one row type and one mapper serve both.

const RENAMES: [string, string][] = [
  ['mean_si', 'mean'],
  ['sd_si', 'sd'],
  ['u_a_si', 'u_a'],
  ['u_b_si', 'u_b'],
  ['u_si', 'u'],
  ['ci_low_si', 'ci_low'],
  ['ci_high_si', 'ci_high'],
]

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('readings', (t) => {
    for (const [from, to] of RENAMES) t.renameColumn(from, to)
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('readings', (t) => {
    for (const [from, to] of RENAMES) t.renameColumn(to, from)
  })
}
