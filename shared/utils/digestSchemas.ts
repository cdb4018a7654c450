import { z } from 'zod'

export const FREQUENCY_VALUES = ['immediate', 'daily', 'weekly', 'off'] as const

export const FREQUENCY_LABELS: Record<typeof FREQUENCY_VALUES[number], string> = {
  immediate: 'Each event, right away',
  daily: 'Daily digest',
  weekly: 'Weekly digest',
  off: 'Off',
}

export const SubscriptionBody = z.object({
  frequency: z.enum(FREQUENCY_VALUES, { error: 'frequency must be immediate, daily, weekly or off' }),
})

/** GET /api/v1/builds/:build/events */
export const EventListQuery = z.object({
  limit: z.coerce.number().int().min(1).max(500).default(100),
})

export const UnsubscribeQuery = z.object({
  u: z.uuid({ error: 'This unsubscribe link is not valid' }),
  b: z.uuid({ error: 'This unsubscribe link is not valid' }),
  s: z.string().min(10, 'This unsubscribe link is not valid').max(100),
})
