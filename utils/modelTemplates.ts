import type { ParameterView } from '#shared/types/api'
import { checkModel, DesignError, type DesignParameter } from '#shared/utils/design'
import { FormulaError } from '#shared/utils/derived'
import { DESIGN_TEMPLATES, checkTemplate, fillTemplate, type DesignTemplate } from '#shared/utils/designTemplates'
import { parseUnit, UnitError } from '#shared/utils/units'

// The target form's "Use a template": the templates of common design math, the build's numeric
// parameters that can fill each slot (those of the slot's quantity first), and the model a
// choice gives with its problems. This module brings the unit tables and the formula parser, so
// the form loads it only when the template picker opens (`await import(...)`).

export interface KeyOption {
  key: string
  name: string
  value: number
  unit: string | null
  /** the parameter's quantity; null when Ratchet doesn't read its unit */
  quantity: string | null
}

export interface SlotOption extends KeyOption {
  /** of the quantity the slot expects */
  fits: boolean
}

export const modelTemplateList: readonly DesignTemplate[] = DESIGN_TEMPLATES

function quantityOf(unit: string | null): string | null {
  try {
    return parseUnit(unit ?? '').quantity
  }
  catch (e) {
    if (e instanceof UnitError) return null
    throw e
  }
}

/** The parameters that can fill a slot: numbers, each with its quantity. */
export function keyOptions(parameters: readonly ParameterView[]): KeyOption[] {
  return parameters.filter(p => typeof p.value === 'number')
    .map(p => ({ key: p.key, name: p.name, value: p.value as number, unit: p.unit, quantity: quantityOf(p.unit) }))
}

/** Every numeric parameter for one slot, those of its quantity first (then by key). */
export function slotOptions(template: DesignTemplate, slot: string, options: readonly KeyOption[]): SlotOption[] {
  const want = quantityOf(template.slots.find(s => s.slot === slot)?.unit ?? null)
  return options.map(o => ({ ...o, fits: want !== null && o.quantity === want }))
    .sort((a, b) => Number(b.fits) - Number(a.fits) || a.key.localeCompare(b.key))
}

/** A first guess: each slot takes a parameter of its quantity that no earlier slot took, else stays empty. */
export function initialFill(template: DesignTemplate, options: readonly KeyOption[]): Record<string, string> {
  const taken = new Set<string>()
  const fill: Record<string, string> = {}
  for (const s of template.slots) {
    const pick = slotOptions(template, s.slot, options).find(o => o.fits && !taken.has(o.key))
    fill[s.slot] = pick?.key ?? ''
    if (pick) taken.add(pick.key)
  }
  return fill
}

const messageOf = (e: unknown) => {
  if (e instanceof FormulaError || e instanceof DesignError || e instanceof UnitError) return e.message
  throw e
}

/**
 * The model a template gives with `fill` (slot → parameter key), and what is wrong with it: the
 * template's own check (its slots in their units give its result), an empty slot, and the
 * model's check against the chosen parameters' units and the target's display unit (the check
 * the server makes when the target is saved). `model` is null when the slots can't fill it.
 */
export function fillModel(template: DesignTemplate, fill: Record<string, string>, options: readonly KeyOption[], targetUnit: string): { model: string | null, problems: string[] } {
  const problems: string[] = []
  try {
    checkTemplate(template)
  }
  catch (e) {
    problems.push(`The template itself: ${messageOf(e)}`)
  }
  let model: string | null = null
  try {
    model = fillTemplate(template, fill)
  }
  catch (e) {
    problems.push(messageOf(e))
    return { model, problems }
  }
  if (targetUnit.trim()) {
    const parameters: Record<string, DesignParameter> = {}
    for (const o of options) parameters[o.key] = { key: o.key, name: o.name, value: o.value, unit: o.unit, tolerance: null }
    try {
      checkModel(model, parameters, targetUnit.trim())
    }
    catch (e) {
      problems.push(messageOf(e))
    }
  }
  return { model, problems }
}
