import type { Knex } from 'knex'

// Design parameters get a key (a slug a model names them by) and a tolerance (± half-width in
// their unit). Stored parameters {name, value, unit} take a key made from their name (unique in
// their revision) and no tolerance; `down` drops both again.

const RESERVED = ['pi', 'e', 'i', 'tau', 'phi', 'true', 'false', 'null', 'undefined', 'to', 'in', 'mod', 'and', 'or', 'not', 'xor',
  'sqrt', 'abs', 'sin', 'cos', 'tan', 'exp', 'log', 'log10']

// the rule of parameterKeyOf in shared/utils/design.ts, copied: a migration must not change when that module does
function keyOf(name: string): string {
  let key = String(name).normalize('NFKD').replace(/[\u0300-\u036F]/g, '').toLowerCase()
    .replace(/[^a-z0-9]+/g, '_').replace(/^_+|_+$/g, '')
  if (key === '') key = 'parameter'
  if (/^[0-9]/.test(key)) key = `p_${key}`
  key = key.slice(0, 54).replace(/_+$/, '')
  if (RESERVED.includes(key)) key = `${key}_param`
  return key
}

interface Stored { key?: string, name?: string, value: number | string, unit: string | null, tolerance?: number | null }

export async function up(knex: Knex): Promise<void> {
  const rows: { id: string, parameters: Stored[] }[] = await knex('revisions').select('id', 'parameters')
  for (const row of rows) {
    if (row.parameters.length === 0 || row.parameters.every(p => typeof p.key === 'string')) continue
    const taken = new Set<string>()
    const parameters = row.parameters.map((p) => {
      if (typeof p.key === 'string') {
        taken.add(p.key)
        return { key: p.key, name: p.name ?? p.key, value: p.value, unit: p.unit ?? null, tolerance: p.tolerance ?? null }
      }
      let key = keyOf(p.name ?? 'parameter')
      for (let i = 2; taken.has(key); i++) key = `${keyOf(p.name ?? 'parameter')}_${i}`
      taken.add(key)
      return { key, name: p.name ?? key, value: p.value, unit: p.unit ?? null, tolerance: null }
    })
    await knex('revisions').where({ id: row.id }).update({ parameters: JSON.stringify(parameters) })
  }
}

export async function down(knex: Knex): Promise<void> {
  const rows: { id: string, parameters: Stored[] }[] = await knex('revisions').select('id', 'parameters')
  for (const row of rows) {
    if (row.parameters.length === 0) continue
    const parameters = row.parameters.map(p => ({ name: p.name ?? p.key, value: p.value, unit: p.unit ?? null }))
    await knex('revisions').where({ id: row.id }).update({ parameters: JSON.stringify(parameters) })
  }
}
