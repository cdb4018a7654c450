import { z } from 'zod'
import { MAX_SAMPLES } from './readingStats'
import { plausibleYear } from './storableText'
import { unitField } from './targetSchemas'

// Shared by the reading form and POST /api/v1/builds/:build/readings. A reading is either
// samples measured here (`values`) or one result with its own standard uncertainty (`value`, `u`,
// optionally `dof`): a stated result, as a calibration certificate or another lab reports it.

const EITHER = 'Give either values (a list of samples) or value with u (one result and its standard uncertainty), not both'

const NEITHER = 'Give values (a list of samples), or value with u (one result and its standard uncertainty)'

const common = {
  revision: z.string({ error: 'Name the revision (its label)' }).trim().min(1, 'Name the revision (its label)').max(40).meta({ description: 'the revision’s label' }),
  target: z.string({ error: 'Name the target (its key)' }).trim().min(1, 'Name the target (its key)').max(60).meta({ description: 'the target’s key' }),
  method: z.string().trim().max(200, 'A method has at most 200 characters').optional(),
  takenAt: z.iso.datetime({ offset: true, error: 'Use an ISO date and time, e.g. 2026-03-14T10:30:00Z' }).refine(plausibleYear, 'Use a time between the years 1900 and 2999').optional(),
  notes: z.string().trim().max(4000, 'Notes have at most 4,000 characters').optional(),
}

export const SamplesReadingBody = z.object({
  revision: common.revision,
  target: common.target,
  values: z.array(
    z.number({ error: 'Each value must be a finite number (not text, NaN or Infinity)' }),
    { error: 'values is a list of numbers' },
  )
    .min(1, 'Give at least one value')
    .max(MAX_SAMPLES, `A reading holds at most ${MAX_SAMPLES.toLocaleString('en')} values`)
    .meta({ description: 'finite numbers; numeric strings are refused' }),
  value: z.never({ error: EITHER }).optional().meta({ description: 'not with values: a stated result is a separate kind of body' }),
  unit: unitField.meta({ description: 'the unit the values are in; any unit of the target’s quantity' }),
  method: common.method,
  /** instrument resolution, in the entered unit; 0 or null: none */
  resolution: z.number({ error: 'The resolution must be a number' }).min(0, 'The resolution is 0 or more').nullable().optional()
    .meta({ description: 'the instrument’s resolution, in the entered unit; 0 or null: none' }),
  takenAt: common.takenAt,
  notes: common.notes,
}).meta({
  description: 'samples measured here: pooled with the other readings of the cell into one sample set',
  examples: [{ revision: 'R4', target: 'top_speed', values: [25.4, 25.9, 25.6], unit: 'km/h', method: 'GPS, flat test track', resolution: 0.1 }],
})

export const StatedReadingBody = z.object({
  revision: common.revision,
  target: common.target,
  value: z.number({ error: 'The value must be a finite number (not text, NaN or Infinity)' })
    .meta({ description: 'the result, in `unit`' }),
  u: z.number({ error: 'The standard uncertainty u must be a finite number (not text, NaN or Infinity)' })
    .min(0, 'The standard uncertainty u is 0 or more')
    .meta({ description: 'its standard uncertainty (one standard deviation, not an expanded uncertainty), in `unit`' }),
  dof: z.number({ error: 'The degrees of freedom must be a number, or null for infinite' })
    .gt(0, 'The degrees of freedom are more than 0 (leave them out for infinite)')
    .nullable().optional()
    .meta({ description: 'the effective degrees of freedom of u; absent or null: infinite. The interval is value ± t(0.975, dof)·u' }),
  values: z.never({ error: EITHER }).optional().meta({ description: 'not with value: samples are a separate kind of body' }),
  unit: unitField.meta({ description: 'the unit of value and u; any unit of the target’s quantity' }),
  method: common.method,
  takenAt: common.takenAt,
  notes: common.notes,
}).meta({
  description: 'a stated result: one value with its standard uncertainty, e.g. from a calibration certificate',
  examples: [{ revision: 'R4', target: 'top_speed', value: 25.62, u: 0.08, dof: 12, unit: 'km/h', method: 'Timing gates, certificate 14' }],
})

const has = (input: unknown, key: string) => typeof input === 'object' && input !== null && (input as Record<string, unknown>)[key] !== undefined

/**
 * Either body. When neither fits, forms and the API report the problems of the kind the body was
 * meant as (accountSchemas.fieldErrors: a body with `value` is a stated result, one without it
 * samples); a body with both `values` and `value` gets one message saying so.
 */
export const ReadingBody = z.union([SamplesReadingBody, StatedReadingBody], {
  error: iss => (iss.code === 'invalid_union' ? (has(iss.input, 'values') && has(iss.input, 'value') ? EITHER : NEITHER) : undefined),
})

export type ReadingInput = z.output<typeof ReadingBody>
export type StatedReadingInput = z.output<typeof StatedReadingBody>

/** A body is a stated result when it carries `value` (and `u`) rather than `values`. */
export function isStatedBody(body: ReadingInput): body is StatedReadingInput {
  return body.values === undefined
}
