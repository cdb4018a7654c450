import { z } from 'zod'
import { plausibleYear } from './storableText'
import { numberField, unitField } from './targetSchemas'

// Shared by the revision forms and the revision routes.

export const revisionLabelField = z.string({ error: 'Give the revision a label' })
  .trim()
  .min(1, 'Give the revision a label')
  .max(40, 'A label has at most 40 characters')
  .regex(/^[A-Za-z0-9][A-Za-z0-9._-]*$/, 'A label uses letters, digits, dots, dashes and underscores (e.g. R3 or v2.1)')

const summaryField = z.string().trim().max(4000, 'A summary has at most 4,000 characters')

const changesField = z.array(
  z.string({ error: 'Each change is a line of text' }).trim().min(1, 'A change can’t be empty').max(500, 'A change has at most 500 characters'),
  { error: 'changes is a list of lines' },
).max(100, 'At most 100 changes')

/** Words a model reads as something else; the same list as RESERVED_PARAMETER_KEYS in design.ts (not imported: that module brings mathjs). */
const RESERVED_KEYS = ['pi', 'e', 'i', 'tau', 'phi', 'true', 'false', 'null', 'undefined', 'to', 'in', 'mod', 'and', 'or', 'not', 'xor',
  'sqrt', 'abs', 'sin', 'cos', 'tan', 'exp', 'log', 'log10']

export const parameterKeyField = z.string({ error: 'A parameter key is text, e.g. wheel_radius' })
  .trim()
  .min(1, 'Give the parameter a key')
  .max(60, 'A key has at most 60 characters')
  .regex(/^[a-z][a-z0-9_]*$/, 'A key uses lower-case letters, digits and underscores, and starts with a letter')
  .refine(k => !RESERVED_KEYS.includes(k), 'This key is a word models read otherwise (a constant, function or operator); choose another')

/**
 * A design parameter: a number (with a unit and a tolerance) or a short text such as a part
 * number, which models can't use. `key` names it in models; without one (the older shape
 * {name, value, unit}) the key of the parameter of that name on the revision or its ancestors
 * is kept, or one is made from the name.
 */
export const ParameterField = z.object({
  key: parameterKeyField.optional().meta({ description: 'the name models use, e.g. wheel_radius; made from `name` when absent' }),
  name: z.string({ error: 'Name the parameter' }).trim().min(1, 'Name the parameter').max(80, 'A name has at most 80 characters').optional()
    .meta({ description: 'shown to people; the key when absent' }),
  value: z.union([numberField('The value'), z.string().trim().min(1).max(200)], { error: 'The value is a number or a short text' })
    .meta({ description: 'a number in `unit`, or a short text (a part number, a material) that models can’t use' }),
  unit: unitField.nullable().optional().meta({ description: 'any unit Ratchet reads (km/h, rpm, mm …); absent: dimensionless' }),
  tolerance: numberField('The tolerance').min(0, 'The tolerance is 0 or more').nullable().optional()
    .meta({ description: '± half-width in `unit`, taken as a rectangular distribution (u = a/√3)' }),
}).superRefine((p, ctx) => {
  if (p.key === undefined && p.name === undefined) ctx.addIssue({ code: 'custom', path: ['key'], message: 'Give the parameter a key (or a name)' })
  if (typeof p.value === 'string' && p.tolerance != null) ctx.addIssue({ code: 'custom', path: ['tolerance'], message: 'Only a number has a tolerance' })
})

const parametersField = z.array(ParameterField, { error: 'parameters is a list of {key, name, value, unit, tolerance}' }).max(100, 'At most 100 parameters')

const builtOnField = z.iso.date({ error: 'Use a date such as 2026-03-14' }).refine(plausibleYear, 'Use a date between the years 1900 and 2999')

export const RevisionBody = z.object({
  label: revisionLabelField,
  summary: summaryField.optional(),
  changes: changesField.optional(),
  /** the parent's label; omitted: the latest revision; null: none */
  parent: revisionLabelField.nullable().optional().meta({ description: 'the parent’s label; omitted: the latest revision; null: none' }),
  builtOn: builtOnField.nullable().optional(),
  parameters: parametersField.optional(),
}).meta({ examples: [{ label: 'R4', summary: 'Stiffer motor mount', changes: ['Mount plate 4 mm → 6 mm'], builtOn: '2026-03-14', parameters: [{ key: 'mount_plate', name: 'Mount plate', value: 6, unit: 'mm', tolerance: 0.1 }] }] })

export const RevisionPatch = z.object({
  summary: summaryField.optional(),
  changes: changesField.optional(),
  builtOn: builtOnField.nullable().optional(),
  parameters: parametersField.optional(),
})

export const UnfreezeBody = z.object({
  reason: z.string({ error: 'Say why the revision is reopened' }).trim().min(1, 'Say why the revision is reopened').max(1000, 'A reason has at most 1,000 characters'),
})

const compareLabel = (which: string) => z.string({ error: `Give revision ${which}'s label` }).trim().min(1, `Give revision ${which}'s label`).max(40, 'A label has at most 40 characters')

/** GET /api/v1/builds/:build/compare?a=…&b=…: the two revisions' labels. */
export const CompareQuery = z.object({
  a: compareLabel('A').meta({ description: 'the label of the revision on the left' }),
  b: compareLabel('B').meta({ description: 'the label of the revision on the right' }),
})

/** POST /api/v1/builds/:build/targets/:key/solve */
export const SolveBody = z.object({
  parameter: parameterKeyField.meta({ description: 'the key of the parameter to solve for' }),
  revision: revisionLabelField.optional().meta({ description: 'the revision whose other parameters are kept; default the latest' }),
  margin: z.enum(['none', '95'], { error: 'margin is none or 95' }).optional().meta({ description: '95: the lower (upper for atMost) 95 % bound meets the threshold; default none' }),
})

/** GET /api/v1/builds/:build/targets/:key/plan?revision=… */
export const PlanQuery = z.object({
  revision: z.string({ error: 'Give the revision’s label' }).trim().min(1, 'Give the revision’s label').max(40, 'A label has at most 40 characters')
    .meta({ description: 'the revision whose readings of the target are planned for' }),
})
