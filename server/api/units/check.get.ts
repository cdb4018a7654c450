import { z } from 'zod'

const Query = z.object({
  unit: unitField,
  /** a unit to show the conversion to; it must measure the same quantity */
  to: unitField.optional(),
})

// Reads a typed unit expression for the picker's preview: its canonical spelling, its quantity
// and, with `to`, one unit converted ("1 lbf/in = 0.175127 N/mm"). 400 when the text is no
// unit, 422 when `to` measures another quantity.
export default defineEventHandler((event) => {
  const { unit, to } = queryAs(event, Query)
  try {
    const u = parseUnit(unit)
    return {
      unit: u.unit,
      quantity: u.quantity,
      quantityLabel: quantityLabel(u.quantity),
      label: u.label,
      si: siUnitOf(u.quantity),
      conversion: to ? conversionText(unit, to) : (u.unit === siUnitOf(u.quantity) ? null : conversionText(unit, siUnitOf(u.quantity))),
    }
  }
  catch (e) {
    throw unitProblem(e)
  }
})
