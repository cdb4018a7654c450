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
  return Object.hasOwn(HAZARDS, quantity) ? HAZARDS[quantity]! : null
}

const DEFER = 'Follow local codes and licensed practice.'

/** Three significant digits, grouped: 116, 1,230, 0.0452. */
function sig3(x: number): string {
  return Number(x.toPrecision(3)).toLocaleString('en', { maximumSignificantDigits: 3 })
}

export interface NumberedCaution {
  hazard: Hazard
  /** the number the caution is about, in SI */
  value: number
  unit: string
  text: string
}

/**
 * A projectile's kinetic energy, K = ½mv² (OpenStax University Physics Vol. 1, eq. 7.6), with
 * the usual precaution. Mass in kg, speed in m/s.
 */
export function projectileCaution(massKg: number, speedMs: number): NumberedCaution | null {
  if (!(massKg > 0) || !Number.isFinite(speedMs) || speedMs === 0) return null
  const energy = 0.5 * massKg * speedMs * speedMs
  if (!Number.isFinite(energy)) return null
  return {
    hazard: 'mechanical',
    value: energy,
    unit: 'J',
    text: `A ${sig3(massKg * 1000)} g projectile at ${sig3(Math.abs(speedMs))} m/s carries ${sig3(energy)} J. Wear eye protection, keep everyone out of the line of fire and catch it in a net or guard. ${DEFER}`,
  }
}

/** A spinning part's rim speed, v = ωr (OpenStax University Physics Vol. 1, eq. 10.4). ω in rad/s, r in m. */
export function rimSpeedCaution(omegaRadS: number, radiusM: number): NumberedCaution | null {
  const speed = Math.abs(omegaRadS * radiusM)
  if (!(speed > 0) || !Number.isFinite(speed)) return null
  return {
    hazard: 'mechanical',
    value: speed,
    unit: 'm/s',
    text: `The rim moves at ${sig3(speed)} m/s (${sig3(speed * 3.6)} km/h). Run it behind a guard that can hold a thrown part, and stand clear of its plane. ${DEFER}`,
  }
}

/** The loads' peak current against the limit of the pack (or its fuse) that feeds them, in A. */
export function currentCaution(peakA: number, limitA: number): NumberedCaution | null {
  if (!(peakA > 0) || !(limitA > 0) || !Number.isFinite(peakA) || !Number.isFinite(limitA)) return null
  const share = peakA / limitA
  const verdict = share > 1
    ? `over the pack’s ${sig3(limitA)} A limit by ${sig3((share - 1) * 100)} %`
    : `${sig3(share * 100)} % of the pack’s ${sig3(limitA)} A limit`
  return {
    hazard: 'electrical',
    value: peakA,
    unit: 'A',
    text: `The loads draw up to ${sig3(peakA)} A, ${verdict}. Fuse every branch below what its wiring and the pack can carry, and charge packs where a fire can be contained. ${DEFER}`,
  }
}
