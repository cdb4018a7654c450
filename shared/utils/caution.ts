// Quantities whose numbers touch something that can hurt. The UI shows the usual cautions next
// to such a target and defers to local codes and licensed practice.

import type { Quantity } from './units'

export type Hazard = 'electrical' | 'thermal' | 'mechanical'

const HAZARDS: Partial<Record<Quantity, Hazard>> = {
  current: 'electrical',
  voltage: 'electrical',
  power: 'electrical',
  energy: 'electrical',
  charge: 'electrical',
  temperature: 'thermal',
  angularSpeed: 'mechanical',
}

/** The kind of hazard a target of this quantity touches, or null. */
export function hazardOf(quantity: Quantity): Hazard | null {
  return HAZARDS[quantity] ?? null
}
