import { z } from 'zod'
import { nameField, slugField } from './accountSchemas'

export const BuildBody = z.object({
  team: z.string({ error: 'Name the team (its id or slug)' }).min(1, 'Name the team (its id or slug)').max(80).meta({ description: 'the team’s id or slug' }),
  name: nameField,
  slug: slugField.optional(),
  summary: z.string().trim().max(2000, 'A summary has at most 2,000 characters').optional(),
}).meta({ examples: [{ team: 'drivetrain', name: 'Hub motor, second build', summary: 'Geared hub motor for the cargo trike' }] })

export const BuildPatch = z.object({
  name: nameField.optional(),
  summary: z.string().trim().max(2000, 'A summary has at most 2,000 characters').optional(),
  archived: z.boolean({ error: 'archived is true or false' }).optional(),
})

/** The text fields of a build archive's import (multipart, sent before the file). */
export const ArchiveImportFields = z.object({
  name: nameField.optional().meta({ description: 'the new build’s name; the archived build’s name when absent' }),
})
