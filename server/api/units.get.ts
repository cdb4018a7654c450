import { z } from 'zod'

const Query = z.object({
  quantity: z.string().trim().max(80, 'A quantity has at most 80 characters')
    .refine(q => Object.hasOwn(QUANTITY_LABELS, q) || q.startsWith('dim:'), 'quantity is a named quantity (torque, stiffness …) or dim: and its SI base units')
    .optional(),
})

// Units for the unit picker, with their quantity and the words a search finds them by
// (public: nothing here is private). Any other unit expression is accepted too.
export default defineEventHandler((event) => {
  const { quantity } = queryAs(event, Query)
  return listUnits(quantity || undefined).map(u => ({
    unit: u.unit,
    quantity: u.quantity,
    quantityLabel: quantityLabel(u.quantity),
    label: u.label,
    words: quantityWords(u.quantity),
  }))
})
