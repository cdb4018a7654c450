import { z } from 'zod'
import { MAX_SAMPLES } from './readingStats'
import { plausibleYear } from './storableText'
import { unitField } from './targetSchemas'
import { MAX_TRACK_POINTS, MIN_TRACK_POINTS } from './track'

// Shared by the reading form and POST /api/v1/builds/:build/readings. A reading is either
// samples measured here (`values`) or one result with its own standard uncertainty (`value`, `u`,
// optionally `dof`): a stated result, as a calibration certificate or another lab reports it; or a
// track: positions marked at times (on frames of footage), whose fitted slope is a speed.

const EITHER = 'Give either values (a list of samples) or value with u (one result and its standard uncertainty), not both'

const NEITHER = 'Give values (a list of samples), value with u (one result and its standard uncertainty), or a track (positions at times)'

const ONE_KIND = 'Give one of values, value with u, or track: a reading is one kind'

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
  track: z.never({ error: ONE_KIND }).optional().meta({ description: 'not with values: a track is a separate kind of body' }),
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
  track: z.never({ error: ONE_KIND }).optional().meta({ description: 'not with value: a track is a separate kind of body' }),
  unit: unitField.meta({ description: 'the unit of value and u; any unit of the target’s quantity' }),
  method: common.method,
  takenAt: common.takenAt,
  notes: common.notes,
}).meta({
  description: 'a stated result: one value with its standard uncertainty, e.g. from a calibration certificate',
  examples: [{ revision: 'R4', target: 'top_speed', value: 25.62, u: 0.08, dof: 12, unit: 'km/h', method: 'Timing gates, certificate 14' }],
})

const finite = (what: string) => z.number({ error: `${what} must be a finite number (not text, NaN or Infinity)` })

export const TrackBody = z.object({
  points: z.array(
    z.object({
      t: finite('Each time t').meta({ description: 'the time, in `timeUnit`' }),
      x: finite('Each position x').meta({ description: 'the position along the path, in `unit`' }),
      frame: z.number({ error: 'A frame is a whole number' }).int('A frame is a whole number').min(0, 'A frame is 0 or more').optional()
        .meta({ description: 'the frame of the footage the position was marked on' }),
    }),
    { error: 'points is a list of {t, x}' },
  )
    .min(MIN_TRACK_POINTS, `Give at least ${MIN_TRACK_POINTS} points: a line through fewer has no uncertainty`)
    .max(MAX_TRACK_POINTS, `A track holds at most ${MAX_TRACK_POINTS.toLocaleString('en')} points`),
  timeUnit: unitField.meta({ description: 'the unit of t: a unit of time (s, ms, min …)' }),
  unit: unitField.meta({ description: 'the unit of x: a unit of length (m, mm, in …)' }),
})

export const TrackReadingBody = z.object({
  revision: common.revision,
  target: common.target,
  track: TrackBody.meta({ description: 'positions at times; the reading is the least-squares slope of x on t (a speed), its u the slope’s standard error with n − 2 degrees of freedom' }),
  file: z.uuid({ error: 'file is the id of one of the build’s files' }).optional()
    .meta({ description: 'the footage the points were marked on (a file of the build); it becomes the reading’s evidence' }),
  values: z.never({ error: ONE_KIND }).optional().meta({ description: 'not with track' }),
  value: z.never({ error: ONE_KIND }).optional().meta({ description: 'not with track' }),
  method: common.method,
  takenAt: common.takenAt,
  notes: common.notes,
}).meta({
  description: 'a track: positions marked at times, e.g. on frames of footage; its slope is a speed',
  examples: [{ revision: 'R2', target: 'exit_speed', track: { timeUnit: 'ms', unit: 'mm', points: [{ t: 0, x: 12, frame: 100 }, { t: 4.1667, x: 84.5, frame: 101 }, { t: 8.3333, x: 157.9, frame: 102 }] }, method: 'footage, 240 fps, 3 frames' }],
})

const has = (input: unknown, key: string) => typeof input === 'object' && input !== null && (input as Record<string, unknown>)[key] !== undefined

/**
 * Any of the three bodies. When none fits, forms and the API report the problems of the kind the
 * body was meant as (accountSchemas.fieldErrors: a body with `track` is a track, one with `value` a
 * stated result, one without either samples); a body mixing kinds gets one message saying so.
 */
export const ReadingBody = z.union([SamplesReadingBody, StatedReadingBody, TrackReadingBody], {
  error: (iss) => {
    if (iss.code !== 'invalid_union') return undefined
    const kinds = ['values', 'value', 'track'].filter(k => has(iss.input, k)).length
    if (kinds > 1) return has(iss.input, 'track') ? ONE_KIND : EITHER
    return NEITHER
  },
})

export type ReadingInput = z.output<typeof ReadingBody>
export type StatedReadingInput = z.output<typeof StatedReadingBody>
export type TrackReadingInput = z.output<typeof TrackReadingBody>

/** A body is a stated result when it carries `value` (and `u`) rather than `values`. */
export function isStatedBody(body: ReadingInput): body is StatedReadingInput {
  return body.value !== undefined
}

/** A body is a track when it carries `track`. */
export function isTrackBody(body: ReadingInput): body is TrackReadingInput {
  return body.track !== undefined
}
