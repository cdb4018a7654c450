import { z } from 'zod'
import { nameField, slugField } from './accountSchemas'
import { storableText } from './storableText'

export const BuildBody = z.object({
  team: storableText(z.string({ error: 'Name the team (its id or slug)' }).min(1, 'Name the team (its id or slug)').max(80)).meta({ description: 'the team’s id or slug' }),
  name: storableText(nameField),
  slug: slugField.optional(),
  summary: storableText(z.string().trim().max(2000, 'A summary has at most 2,000 characters')).optional(),
}).meta({ examples: [{ team: 'drivetrain', name: 'Hub motor, second build', summary: 'Geared hub motor for the cargo trike' }] })

export const BuildPatch = z.object({
  name: storableText(nameField).optional(),
  summary: storableText(z.string().trim().max(2000, 'A summary has at most 2,000 characters')).optional(),
  archived: z.boolean({ error: 'archived is true or false' }).optional(),
})
