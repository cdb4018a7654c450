import { z } from 'zod'
import { FIX_STATES, LANES, SEVERITIES } from './lanes'
import { revisionLabelField } from './revisionSchemas'
import { targetKeyField } from './targetSchemas'

// Shared by the finding, fix and comment forms and their routes.

export const FINDING_TITLE_MAX = 200
export const FINDING_DESCRIPTION_MAX = 20_000
export const COMMENT_MAX = 10_000

export const findingTitleField = z.string({ error: 'Give the finding a title' })
  .trim()
  .min(1, 'Give the finding a title')
  .max(FINDING_TITLE_MAX, `A title has at most ${FINDING_TITLE_MAX} characters`)

export const findingDescriptionField = z.string({ error: 'The description is text (Markdown)' })
  .max(FINDING_DESCRIPTION_MAX, `A description has at most ${FINDING_DESCRIPTION_MAX.toLocaleString('en')} characters`)

export const severityField = z.enum(SEVERITIES, { error: 'The severity is safety, blocks-target, degrades or cosmetic' })
export const laneField = z.enum(LANES, { error: 'The lane is spotted, traced, bench, retest, closed or parked' })
export const fixStateField = z.enum(FIX_STATES, { error: 'The state is planned, in-progress, landed or dropped' })

const targetsField = z.array(targetKeyField, { error: 'targets is a list of target keys' })
  .max(50, 'At most 50 targets')
  .refine(keys => new Set(keys).size === keys.length, 'A target is listed twice')

const versionField = z.number({ error: 'Send the version you last saw' }).int('The version is a whole number').min(1, 'The version is 1 or more')

const idField = (what: string) => z.uuid({ error: `${what} is the id of a finding` })

export const FindingCreate = z.object({
  title: findingTitleField,
  description: findingDescriptionField.optional().meta({ description: 'Markdown; rendered and sanitized when shown' }),
  severity: severityField,
  seenOn: revisionLabelField.nullable().optional().meta({ description: 'the label of the revision it was seen on' }),
  targets: targetsField.optional().meta({ description: 'keys of the targets it hurts' }),
}).meta({ examples: [{ title: 'Connector warm after the climb', severity: 'degrades', seenOn: 'R4', targets: ['top_speed'] }] })

export const FindingPatch = z.object({
  version: versionField,
  title: findingTitleField.optional(),
  description: findingDescriptionField.optional(),
  severity: severityField.optional(),
  seenOn: revisionLabelField.nullable().optional(),
  targets: targetsField.optional(),
})

export const overrideReasonField = z.string({ error: 'Give a reason for the override' })
  .trim()
  .min(5, 'Say why the rule is overridden (at least 5 characters)')
  .max(1000, 'A reason has at most 1,000 characters')

/**
 * A move into `lane`, between the cards `after` (the card above) and `before` (the card below);
 * with neither, to the end of the lane.
 */
export const MoveBody = z.object({
  lane: laneField,
  before: idField('before').optional().meta({ description: 'the id of the card the moved one goes above' }),
  after: idField('after').optional().meta({ description: 'the id of the card the moved one goes below; with neither, to the end of the lane' }),
  version: versionField.meta({ description: 'the version you last saw' }),
  override: z.object({ reason: overrideReasonField }, { error: 'override is {reason}' }).optional()
    .meta({ description: 'Owners only: enter Retest or Closed although the rule refuses; the reason is kept in the history' }),
}).refine(b => !b.before || b.before !== b.after, { message: 'before and after name the same card', path: ['before'] })

export const dueOnField = z.iso.date({ error: 'The due date is a date (YYYY-MM-DD)' })

const fixFields = {
  description: z.string({ error: 'Describe the fix' }).trim().min(1, 'Describe the fix').max(2000, 'A fix has at most 2,000 characters'),
  ownerId: z.uuid({ error: 'The owner is a member of the team' }).nullable(),
  dueOn: dueOnField.nullable(),
  state: fixStateField,
  landedIn: revisionLabelField.nullable(),
}

export interface FixRuleInput { state?: string, landedIn?: string | null }

/** What is wrong with a fix's state and landed-in revision together, by field. */
export function fixRuleProblems(f: FixRuleInput): Record<string, string> {
  if (f.state === 'landed' && !f.landedIn) return { landedIn: 'Say which revision the fix landed in' }
  if (f.state !== 'landed' && f.landedIn) return { state: 'A fix with a landed-in revision is in the landed state' }
  return {}
}

export const FixBody = z.object({
  description: fixFields.description,
  ownerId: fixFields.ownerId.optional(),
  dueOn: fixFields.dueOn.optional(),
  state: fixFields.state.default('planned'),
  landedIn: fixFields.landedIn.optional(),
}).superRefine((f, ctx) => {
  for (const [path, message] of Object.entries(fixRuleProblems(f))) ctx.addIssue({ code: 'custom', path: [path], message })
})

/** Partial edit; the server checks the merged state and landed-in revision with fixRuleProblems. */
export const FixPatch = z.object({
  description: fixFields.description.optional(),
  ownerId: fixFields.ownerId.optional(),
  dueOn: fixFields.dueOn.optional(),
  state: fixFields.state.optional(),
  landedIn: fixFields.landedIn.optional(),
})

export const CommentBody = z.object({
  body: z.string({ error: 'Write a comment' }).trim().min(1, 'Write a comment').max(COMMENT_MAX, `A comment has at most ${COMMENT_MAX.toLocaleString('en')} characters`),
})

export const FindingListQuery = z.object({
  lane: laneField.optional(),
  severity: severityField.optional(),
})
