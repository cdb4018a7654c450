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

/** A design parameter: a number (with a unit) or a short text such as a part number. */
export const ParameterField = z.object({
  name: z.string({ error: 'Name the parameter' }).trim().min(1, 'Name the parameter').max(80, 'A name has at most 80 characters'),
  value: z.union([numberField('The value'), z.string().trim().min(1).max(200)], { error: 'The value is a number or a short text' }),
  unit: unitField.nullable().optional(),
})

const parametersField = z.array(ParameterField, { error: 'parameters is a list of {name, value, unit}' }).max(100, 'At most 100 parameters')

const builtOnField = z.iso.date({ error: 'Use a date such as 2026-03-14' }).refine(plausibleYear, 'Use a date between the years 1900 and 2999')

export const RevisionBody = z.object({
  label: revisionLabelField,
  summary: summaryField.optional(),
  changes: changesField.optional(),
  /** the parent's label; omitted: the latest revision; null: none */
  parent: revisionLabelField.nullable().optional().meta({ description: 'the parent’s label; omitted: the latest revision; null: none' }),
  builtOn: builtOnField.nullable().optional(),
  parameters: parametersField.optional(),
}).meta({ examples: [{ label: 'R4', summary: 'Stiffer motor mount', changes: ['Mount plate 4 mm → 6 mm'], builtOn: '2026-03-14', parameters: [{ name: 'Mount plate', value: 6, unit: 'mm' }] }] })

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
