import { z } from 'zod'
import { MAX_SAMPLES } from './readingStats'
import { plausibleYear } from './storableText'
import { unitField } from './targetSchemas'

// Shared by the reading form and POST /api/v1/builds/:build/readings.

export const ReadingBody = z.object({
  revision: z.string({ error: 'Name the revision (its label)' }).trim().min(1, 'Name the revision (its label)').max(40).meta({ description: 'the revision’s label' }),
  target: z.string({ error: 'Name the target (its key)' }).trim().min(1, 'Name the target (its key)').max(60).meta({ description: 'the target’s key' }),
  values: z.array(
    z.number({ error: 'Each value must be a finite number (not text, NaN or Infinity)' }),
    { error: 'values is a list of numbers' },
  )
    .min(1, 'Give at least one value')
    .max(MAX_SAMPLES, `A reading holds at most ${MAX_SAMPLES.toLocaleString('en')} values`)
    .meta({ description: 'finite numbers; numeric strings are refused' }),
  unit: unitField.meta({ description: 'the unit the values are in; any unit of the target’s quantity' }),
  method: z.string().trim().max(200, 'A method has at most 200 characters').optional(),
  /** instrument resolution, in the entered unit; 0 or null: none */
  resolution: z.number({ error: 'The resolution must be a number' }).min(0, 'The resolution is 0 or more').nullable().optional()
    .meta({ description: 'the instrument’s resolution, in the entered unit; 0 or null: none' }),
  takenAt: z.iso.datetime({ offset: true, error: 'Use an ISO date and time, e.g. 2026-03-14T10:30:00Z' }).refine(plausibleYear, 'Use a time between the years 1900 and 2999').optional(),
  notes: z.string().trim().max(4000, 'Notes have at most 4,000 characters').optional(),
}).meta({ examples: [{ revision: 'R4', target: 'top_speed', values: [25.4, 25.9, 25.6], unit: 'km/h', method: 'GPS, flat test track', resolution: 0.1 }] })
