// Templates for common design math. A template is a model with named slots; filling it with a
// build's own parameter keys gives a model (a formula over those keys) for a target. Each
// template names its source, shown in the UI beside it.

import { FormulaError, checkFormula } from './derived'

export interface TemplateSlot {
  /** the slot's name inside the template's formula */
  slot: string
  label: string
  /** a unit of the quantity the slot expects, for the dimension check and as a hint */
  unit: string
}

export interface DesignTemplate {
  key: string
  name: string
  /** the formula over slot names */
  formula: string
  slots: TemplateSlot[]
  /** a unit of the quantity the model gives */
  result: string
  source: string
}

export const DESIGN_TEMPLATES: readonly DesignTemplate[] = [
  {
    key: 'rim-speed',
    name: 'Rim speed from rotational speed and radius (v = ω·r)',
    formula: 'omega * r',
    slots: [{ slot: 'omega', label: 'rotational speed', unit: 'rpm' }, { slot: 'r', label: 'radius', unit: 'mm' }],
    result: 'm/s',
    source: 'OpenStax University Physics Vol. 1, eq. 10.4 (tangential speed v = rω)',
  },
  {
    key: 'kinetic-energy',
    name: 'Kinetic energy (½·m·v²)',
    formula: '0.5 * m * v^2',
    slots: [{ slot: 'm', label: 'mass', unit: 'kg' }, { slot: 'v', label: 'speed', unit: 'm/s' }],
    result: 'J',
    source: 'OpenStax University Physics Vol. 1, eq. 7.6 (kinetic energy K = ½mv²)',
  },
  {
    key: 'slider-crank',
    name: 'Slider-crank position (x = r·cos θ + √(l² − r²·sin² θ))',
    formula: 'r * cos(theta) + sqrt(l^2 - r^2 * sin(theta)^2)',
    slots: [
      { slot: 'r', label: 'crank radius', unit: 'mm' },
      { slot: 'l', label: 'connecting-rod length', unit: 'mm' },
      { slot: 'theta', label: 'crank angle', unit: 'deg' },
    ],
    result: 'mm',
    source: 'the geometry of the crank triangle (law of cosines); common practice, no single source',
  },
  {
    key: 'motor-no-load-speed',
    name: 'DC motor no-load speed from Kv and voltage (n = Kv·V)',
    formula: 'kv * voltage',
    slots: [{ slot: 'kv', label: 'motor Kv', unit: 'rpm/V' }, { slot: 'voltage', label: 'supply voltage', unit: 'V' }],
    result: 'rpm',
    source: 'common practice, no source (ignores load, losses and voltage sag)',
  },
  {
    key: 'battery-continuous-current',
    name: 'Battery continuous current from capacity and C rating (I = C·Q)',
    formula: 'c_rating * capacity',
    slots: [{ slot: 'c_rating', label: 'C rating', unit: '1/h' }, { slot: 'capacity', label: 'capacity', unit: 'mAh' }],
    result: 'A',
    source: 'common practice, no source (a C rating of 1 discharges the capacity in one hour)',
  },
  {
    key: 'rotational-power',
    name: 'Power from torque and rotational speed (P = τ·ω)',
    formula: 'torque * omega',
    slots: [{ slot: 'torque', label: 'torque', unit: 'N·m' }, { slot: 'omega', label: 'rotational speed', unit: 'rpm' }],
    result: 'W',
    source: 'OpenStax University Physics Vol. 1, §10.8 (rotational power P = τω)',
  },
]

export function findTemplate(key: string): DesignTemplate | undefined {
  return DESIGN_TEMPLATES.find(t => t.key === key)
}

/**
 * The model a template gives with each slot filled by a parameter key (or a number), e.g.
 * rim-speed with { omega: 'motor_speed', r: 'wheel_radius' } → "motor_speed * wheel_radius".
 * Slots are replaced as whole names in one pass, so a key may share letters with a slot.
 */
export function fillTemplate(template: DesignTemplate, fill: Record<string, string>): string {
  const missing = template.slots.filter(s => !fill[s.slot]?.trim())
  if (missing.length > 0) throw new FormulaError('unknown-key', `Fill ${missing.map(s => s.label).join(', ')}`)
  for (const s of template.slots) {
    if (!/^(?:[a-z][a-z0-9_]*|\d+(?:\.\d+)?(?:e[+-]?\d+)?)$/i.test(fill[s.slot]!.trim())) {
      throw new FormulaError('syntax', `The ${s.label} is a parameter key or a number, not "${fill[s.slot]}"`)
    }
  }
  const names = template.slots.map(s => s.slot).sort((a, b) => b.length - a.length)
  const pattern = new RegExp(`\\b(${names.join('|')})\\b`, 'g')
  return template.formula.replace(pattern, name => fill[name]!.trim())
}

/** Checks that a template's own slots, in their units, give its result's quantity. */
export function checkTemplate(template: DesignTemplate): void {
  const inputs = Object.fromEntries(template.slots.map(s => [s.slot, { unit: s.unit }]))
  checkFormula(template.formula, inputs, template.result)
}
