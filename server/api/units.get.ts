import { z } from 'zod'
import type { Quantity } from '#shared/utils/units'

const QUANTITIES = Object.keys(QUANTITY_LABELS) as [Quantity, ...Quantity[]]
const Query = z.object({
  quantity: z.enum(QUANTITIES, { error: `quantity is one of ${QUANTITIES.join(', ')}` }).optional(),
})

// The units Ratchet converts, for the unit picker (public: nothing here is private).
export default defineEventHandler((event) => {
  const { quantity } = queryAs(event, Query)
  return listUnits(quantity).map(u => ({ unit: u.unit, quantity: u.quantity, quantityLabel: QUANTITY_LABELS[u.quantity], label: u.label }))
})
