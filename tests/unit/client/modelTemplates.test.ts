import { describe, expect, it } from 'vitest'
import { findTemplate, type DesignTemplate } from '#shared/utils/designTemplates'
import { fillModel, initialFill, keyOptions, modelTemplateList, slotOptions } from '../../../utils/modelTemplates'

// The template picker's logic: which parameters fit which slot, the first guess, and the model
// with its problems (the same checks the server makes on save; the templates' own equations are
// checked against their sources in designTemplates.test.ts).

const launcher = keyOptions([
  { key: 'wheel_radius', name: 'Wheel radius', value: 60, unit: 'mm', tolerance: 0.2 },
  { key: 'motor_speed', name: 'Motor speed set-point', value: 3600, unit: 'rpm', tolerance: null },
  { key: 'ball_mass', name: 'Ball mass', value: 58, unit: 'g', tolerance: 1 },
  { key: 'hub_radius', name: 'Hub radius', value: 12, unit: 'mm', tolerance: null },
  { key: 'wheel_material', name: 'Wheel material', value: 'rubber tread', unit: null, tolerance: null },
  { key: 'teeth', name: 'Teeth', value: 40, unit: 'teeth', tolerance: null },
])
const rim = findTemplate('rim-speed')!

describe('the template picker', () => {
  it('lists every template with its source', () => {
    expect(modelTemplateList.map(t => t.key)).toEqual(['rim-speed', 'kinetic-energy', 'slider-crank', 'motor-no-load-speed', 'battery-continuous-current', 'rotational-power'])
    expect(rim.source).toMatch(/OpenStax University Physics Vol\. 1, eq\. 10\.4/)
    expect(findTemplate('motor-no-load-speed')!.source).toMatch(/common practice, no source/)
  })

  it('offers numeric parameters only, those of the slot’s quantity first', () => {
    expect(launcher.map(o => o.key)).toEqual(['wheel_radius', 'motor_speed', 'ball_mass', 'hub_radius', 'teeth'])
    expect(launcher.find(o => o.key === 'teeth')!.quantity).toBeNull()
    const r = slotOptions(rim, 'r', launcher)
    expect(r.filter(o => o.fits).map(o => o.key)).toEqual(['hub_radius', 'wheel_radius'])
    expect(r.slice(0, 2).every(o => o.fits)).toBe(true)
    expect(slotOptions(rim, 'omega', launcher)[0]).toMatchObject({ key: 'motor_speed', fits: true })
  })

  it('guesses each slot from its quantity, never one key twice, and leaves a slot empty when nothing fits', () => {
    expect(initialFill(rim, launcher)).toEqual({ omega: 'motor_speed', r: 'hub_radius' })
    expect(initialFill(findTemplate('slider-crank')!, launcher)).toEqual({ r: 'hub_radius', l: 'wheel_radius', theta: '' })
  })

  it('fills the model and checks it against the target’s unit as the server does', () => {
    expect(fillModel(rim, { omega: 'motor_speed', r: 'wheel_radius' }, launcher, 'm/s')).toEqual({ model: 'motor_speed * wheel_radius', problems: [] })
    // ½ · kg · m² is a moment of inertia, not an energy
    expect(fillModel(findTemplate('kinetic-energy')!, { m: 'ball_mass', v: 'wheel_radius' }, launcher, 'J').problems)
      .toEqual(['The model gives moment of inertia (kg·m²) but this target is measured in energy (J)'])
    const wrong = fillModel(rim, { omega: 'motor_speed', r: 'wheel_radius' }, launcher, 'N·m')
    expect(wrong.model).toBe('motor_speed * wheel_radius')
    expect(wrong.problems).toHaveLength(1)
    expect(wrong.problems[0]).toMatch(/torque/)
    // no display unit yet: nothing to check the quantity against
    expect(fillModel(rim, { omega: 'motor_speed', r: 'wheel_radius' }, launcher, '').problems).toEqual([])
  })

  it('says which slot is empty, and what is wrong with a template that doesn’t hold', () => {
    expect(fillModel(rim, { omega: 'motor_speed', r: '' }, launcher, 'm/s')).toEqual({ model: null, problems: ['Fill radius'] })
    const broken: DesignTemplate = { ...rim, result: 'N' }
    const out = fillModel(broken, { omega: 'motor_speed', r: 'wheel_radius' }, launcher, 'm/s')
    expect(out.problems[0]).toMatch(/^The template itself: /)
  })
})
