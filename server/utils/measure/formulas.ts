import { createError } from 'h3'
import type { Knex } from 'knex'
import { assertNoCycle, checkFormula, FormulaError, parseFormula } from '#shared/utils/derived'

// Derived targets' formulas checked against the build when they are saved: the keys must be
// targets of the build, the formulas must not refer to each other in a circle, and the result
// must be of the target's quantity. Plain Knex with the transaction passed in.

/** A FormulaError as the answer to the request: 400 for a syntax error, 422 otherwise. */
export function formulaProblem(e: unknown) {
  if (!(e instanceof FormulaError)) return e
  return createError({
    statusCode: e.code === 'syntax' ? 400 : 422,
    message: `formula: ${e.message}`,
    data: { fields: { formula: e.message }, code: e.code, keys: e.keys },
  })
}

/** The keys a stored formula uses; [] for a measured target, or one that can't be read (it was checked when saved). */
export function formulaKeys(formula: string | null): string[] {
  if (formula === null) return []
  try {
    return parseFormula(formula).symbols
  }
  catch {
    return []
  }
}

/**
 * Checks `formula` for the target `self` (its key and display unit; its id when it exists) of
 * the build, holding the build's row lock so that two formulas saved at once can't close a
 * circle. Throws the 400/422 answer; returns the formula as stored.
 */
export async function checkTargetFormula(trx: Knex.Transaction, buildId: string, self: { key: string, unit: string }, formula: string): Promise<string> {
  await trx('builds').where({ id: buildId }).forUpdate().first('id')
  const others = await trx('targets').where({ build_id: buildId }).whereNot({ key: self.key })
    .select('key', 'unit', 'formula')
  try {
    const { symbols } = parseFormula(formula)
    if (symbols.length === 0) {
      throw new FormulaError('syntax', 'The formula uses no target key; a derived target is computed from other targets of the build')
    }
    const inputs: Record<string, { unit: string }> = { [self.key]: { unit: self.unit } }
    for (const t of others) inputs[t.key] = { unit: t.unit }
    const graph: Record<string, string[]> = { [self.key]: symbols }
    for (const t of others) if (t.formula) graph[t.key] = formulaKeys(t.formula)
    // unknown keys first, then circles, then the dimension
    const unknown = symbols.filter(s => !Object.hasOwn(inputs, s))
    if (unknown.length === 0) assertNoCycle(graph)
    checkFormula(formula, inputs, self.unit)
  }
  catch (e) {
    throw formulaProblem(e)
  }
  return formula.trim()
}
