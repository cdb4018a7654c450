import { z } from 'zod'
import { nameField } from './accountSchemas'

// Shared by the target forms and the target routes. Numbers are in the target's display unit.

export const COMPARATORS = ['atLeast', 'atMost', 'between'] as const

// `order` is a path of its own under a build's targets (the drag order).
const RESERVED_KEYS = ['order']

export const targetKeyField = z.string({ error: 'Give the target a key' })
  .trim()
  .min(1, 'Give the target a key')
  .max(60, 'A key has at most 60 characters')
  .regex(/^[a-z][a-z0-9_]*$/, 'A key uses lower-case letters, digits and underscores, and starts with a letter')
  .refine(k => !RESERVED_KEYS.includes(k), 'This key is reserved; choose another')

export const unitField = z.string({ error: 'Give a unit' }).trim().min(1, 'Give a unit').max(30, 'A unit has at most 30 characters')

/** A finite number (zod refuses NaN, Infinity and numeric strings). */
export const numberField = (what: string) => z.number({ error: `${what} must be a number` })

export const comparatorField = z.enum(COMPARATORS, { error: 'The comparator is atLeast, atMost or between' })

const notesField = z.string().trim().max(4000, 'Notes have at most 4,000 characters')

/**
 * A derived target's formula over other targets' keys (shared/utils/derived.ts); empty or null
 * for a measured target. The server checks its keys, dimension and cycles against the build.
 * (The limit is derived.ts's FORMULA_MAX_LENGTH, not imported: that module brings mathjs.)
 */
const FORMULA_MAX_LENGTH = 500
export const formulaField = z.string({ error: 'The formula is text, e.g. wheel_torque * wheel_speed' })
  .trim()
  .max(FORMULA_MAX_LENGTH, `A formula has at most ${FORMULA_MAX_LENGTH} characters`)
  .nullable()
  .transform(f => (f ? f : null))
/** A design model over the revisions' parameter keys (shared/utils/design.ts); empty or null for none. */
export const modelField = z.string({ error: 'The model is text, e.g. motor_speed * wheel_radius' })
  .trim()
  .max(FORMULA_MAX_LENGTH, `A model has at most ${FORMULA_MAX_LENGTH} characters`)
  .nullable()
  .transform(f => (f ? f : null))
const modelDescription = 'a design model predicting this target from the revisions’ design parameters, e.g. "motor_speed * wheel_radius" '
  + '(parameter keys, numbers, + − * / ^, parentheses, pi and the functions of formulas). Parameters are taken in SI; angles are dimensionless (rpm × mm is a speed). '
  + 'Its dimension must be this target’s quantity (422), every key must be a numeric parameter of some revision of the build (422); null removes it.'
const targetNameField = nameField

export interface TargetRuleInput {
  comparator: typeof COMPARATORS[number]
  threshold: number
  thresholdHigh?: number | null
  stretch?: number | null
}

/** What is wrong with a target's thresholds, by field (empty when nothing is). */
export function targetRuleProblems(t: TargetRuleInput): Record<string, string> {
  const out: Record<string, string> = {}
  const high = t.thresholdHigh ?? null
  if (t.comparator === 'between') {
    if (high === null) out.thresholdHigh = 'A between target needs an upper threshold'
    else if (high < t.threshold) out.thresholdHigh = 'The upper threshold must be at least the lower one'
  }
  else if (high !== null) {
    out.thresholdHigh = 'Only a between target has an upper threshold'
  }
  const stretch = t.stretch ?? null
  if (stretch !== null) {
    if (t.comparator === 'atLeast' && stretch < t.threshold) out.stretch = 'For an at-least target the stretch goal is at or above the threshold'
    if (t.comparator === 'atMost' && stretch > t.threshold) out.stretch = 'For an at-most target the stretch goal is at or below the threshold'
    if (t.comparator === 'between' && high !== null && (stretch < t.threshold || stretch > high)) out.stretch = 'For a between target the stretch goal lies inside the band'
  }
  return out
}

function refineRule(t: TargetRuleInput, ctx: z.RefinementCtx) {
  for (const [path, message] of Object.entries(targetRuleProblems(t))) ctx.addIssue({ code: 'custom', path: [path], message })
}

export const TargetBody = z.object({
  key: targetKeyField,
  name: targetNameField,
  unit: unitField.meta({ description: 'the display unit, e.g. km/h, N·m, °C (GET /api/units lists them)' }),
  comparator: comparatorField,
  threshold: numberField('The threshold').meta({ description: 'in the display unit' }),
  thresholdHigh: numberField('The upper threshold').nullable().optional().meta({ description: 'the upper edge; required for between, ≥ threshold' }),
  stretch: numberField('The stretch goal').nullable().optional(),
  noiseBand: numberField('The noise band').min(0, 'The noise band is 0 or more').nullable().optional().meta({ description: 'the smallest change that matters' }),
  notes: notesField.optional(),
  formula: formulaField.optional().meta({
    description: 'makes it a derived target: a formula over other targets’ keys, e.g. "wheel_torque * wheel_speed" (numbers, keys, + − * / ^, parentheses, pi, sqrt() abs() sin() cos() tan() exp() log() log10()). '
      + 'Each key stands for that target’s pooled mean in SI; the result must be of this target’s quantity. A derived target takes no readings.',
  }),
  model: modelField.optional().meta({ description: modelDescription }),
}).superRefine(refineRule)
  .meta({ examples: [{ key: 'top_speed', name: 'Top speed on the flat', unit: 'km/h', comparator: 'atLeast', threshold: 25, stretch: 28, noiseBand: 0.5 }] })

/** Partial edit; the server checks the merged thresholds with targetRuleProblems. */
export const TargetPatch = z.object({
  name: targetNameField.optional(),
  unit: unitField.optional(),
  comparator: comparatorField.optional(),
  threshold: numberField('The threshold').optional(),
  thresholdHigh: numberField('The upper threshold').nullable().optional(),
  stretch: numberField('The stretch goal').nullable().optional(),
  noiseBand: numberField('The noise band').min(0, 'The noise band is 0 or more').nullable().optional(),
  notes: notesField.optional(),
  formula: formulaField.optional(),
  model: modelField.optional().meta({ description: modelDescription }),
  archived: z.boolean({ error: 'archived is true or false' }).optional(),
})

export const TargetOrderBody = z.object({
  keys: z.array(targetKeyField, { error: 'keys: give the list of target keys' })
    .min(1, 'Give the list of target keys')
    .max(1000),
})

export const TargetListQuery = z.object({
  archived: z.enum(['0', '1'], { error: 'archived is 0 or 1' }).optional().meta({ description: '1: archived targets too' }),
})
