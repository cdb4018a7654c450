import { z } from 'zod'
import { FILE_KINDS } from './contentTypes'

// Shared by the files tab, the CSV import wizard and their routes.

const column = z.string().trim().max(200, 'A column name has at most 200 characters')
const optionalColumn = column.nullable().optional().transform(v => (v ? v : null))
const optionalText = (max: number) => z.string().trim().max(max).nullable().optional().transform(v => (v ? v : null))

/** The fields that may come with an upload, besides the file (multipart text fields). */
export const UploadFields = z.object({
  revision: optionalText(40).meta({ description: 'attach to this revision (its label)' }),
  reading: z.uuid({ error: 'Give the reading’s id' }).nullable().optional().transform(v => v ?? null)
    .meta({ description: 'attach to this reading (its id); the file then belongs to the reading’s revision too' }),
  finding: z.uuid({ error: 'Give the finding’s id' }).nullable().optional().transform(v => v ?? null)
    .meta({ description: 'attach to this finding (its id)' }),
})

export const FileListQuery = z.object({
  id: z.uuid({ error: 'Give the file’s id' }).optional().meta({ description: 'only this file (the measuring screen opens one by its id)' }),
  revision: optionalText(40),
  reading: z.uuid({ error: 'Give the reading’s id' }).optional(),
  finding: z.uuid({ error: 'Give the finding’s id' }).optional(),
  target: optionalText(60),
  kind: z.enum(FILE_KINDS as [string, ...string[]], { error: `kind is one of ${FILE_KINDS.join(', ')}` }).optional(),
  q: optionalText(100),
  page: z.coerce.number({ error: 'page is a number' }).int().min(1).max(100_000).default(1),
  perPage: z.coerce.number({ error: 'perPage is a number' }).int().min(1).max(100, 'perPage is at most 100').default(24),
})

export const CsvPreviewQuery = z.object({
  file: z.uuid({ error: 'Give the uploaded file’s id' }),
})

export const CsvImportBody = z.object({
  file: z.uuid({ error: 'Give the uploaded file’s id' }),
  target: z.string({ error: 'Choose the target' }).trim().min(1, 'Choose the target').max(60),
  valueColumn: column.min(1, 'Choose the column that holds the values'),
  unitColumn: optionalColumn,
  timeColumn: optionalColumn,
  revisionColumn: optionalColumn,
  uColumn: optionalColumn.meta({ description: 'a column of standard uncertainties: a row with one is a stated result (value ± u), a reading of its own' }),
  dofColumn: optionalColumn.meta({ description: 'with uColumn: the stated results’ degrees of freedom (blank: infinite)' }),
  revision: optionalText(40),
  unit: optionalText(30),
  method: z.string().trim().max(200, 'A method has at most 200 characters').optional(),
  /** instrument resolution, in the unit of the values */
  resolution: z.number({ error: 'The resolution must be a number' }).min(0, 'The resolution is 0 or more').nullable().optional(),
}).refine(b => b.revision || b.revisionColumn, { message: 'Choose the revision, or a column that names it', path: ['revision'] })
  .refine(b => b.unit || b.unitColumn, { message: 'Choose the unit of the values, or a column that names it', path: ['unit'] })
  .refine(b => !b.dofColumn || b.uColumn, { message: 'A degrees-of-freedom column goes with a standard uncertainty (u) column', path: ['dofColumn'] })
