import { describe, expect, it } from 'vitest'
import { MAX_STATED_ROWS, parseNumberCell, parseTimeCell, planCsvImport, problemsMessage, type CsvRow } from '#shared/utils/csvReadings'

const rows = (...lines: string[][]): CsvRow[] => lines.map((cells, i) => ({ line: i + 2, cells }))

describe('parseNumberCell', () => {
  it.each([
    ['41.2', false, 41.2], [' -3 ', false, -3], ['+4', false, 4], ['1e3', false, 1000], ['.5', false, 0.5], ['7.', false, 7],
    ['12,5', true, 12.5], ['12,5', false, null], ['1,234.5', false, null], ['abc', false, null], ['', false, null],
    ['NaN', false, null], ['Infinity', false, null], ['1e999', false, null], ['0x10', false, null], ['4 2', false, null],
  ] as const)('%j (decimal comma %s) → %s', (cell, comma, value) => {
    expect(parseNumberCell(cell, comma)).toBe(value)
  })
})

describe('parseTimeCell (ISO 8601; no zone means UTC)', () => {
  it.each([
    ['2026-03-14T10:30:00Z', '2026-03-14T10:30:00.000Z'],
    ['2026-03-14 10:30', '2026-03-14T10:30:00.000Z'],
    ['2026-03-14T10:30:00+01:00', '2026-03-14T09:30:00.000Z'],
    ['2026-03-14T10:30:00.250-0500', '2026-03-14T15:30:00.250Z'],
    ['2026-03-14', '2026-03-14T00:00:00.000Z'],
    ['2026-02-31', null],
    ['2026-13-01', null],
    ['14/03/2026', null],
    ['10:30', null],
    ['12.5', null],
  ])('%j → %s', (cell, iso) => {
    expect(parseTimeCell(cell)).toBe(iso)
  })
})

describe('planCsvImport', () => {
  const header = ['sample', 'torque', 'unit', 'time', 'rev']
  const defaults = { targetUnit: 'N·m', revision: 'R2', unit: 'N·m' }

  it('groups the values of one revision and unit into one reading', () => {
    const plan = planCsvImport(header, rows(['1', '41.2', '', '', ''], ['2', '41.9', '', '', ''], ['3', '40.8', '', '', '']), { value: 'torque' }, defaults)
    expect(plan.problems).toEqual([])
    expect(plan.groups).toEqual([{ revision: 'R2', unit: 'N·m', values: [41.2, 41.9, 40.8], takenAt: null, firstLine: 2, lastLine: 4 }])
  })

  it('splits by the revision and unit columns, keeps the earliest time, and canonicalises units', () => {
    const plan = planCsvImport(header, rows(
      ['1', '30.1', 'lbf*ft', '2026-03-14T10:31:00Z', 'R1'],
      ['2', '41.0', '', '2026-03-14T10:30:00Z', 'R1'],
      ['3', '30.4', 'lbf·ft', '2026-03-14T10:32:00Z', 'R1'],
      ['4', '42.0', 'N m', '2026-03-15T09:00:00Z', 'R3'],
    ), { value: 'torque', unit: 'unit', time: 'time', revision: 'rev' }, defaults)
    expect(plan.problems).toEqual([])
    expect(plan.groups.map(g => [g.revision, g.unit, g.values, g.takenAt])).toEqual([
      ['R1', 'lbf·ft', [30.1, 30.4], '2026-03-14T10:31:00.000Z'],
      ['R1', 'N·m', [41.0], '2026-03-14T10:30:00.000Z'],
      ['R3', 'N·m', [42.0], '2026-03-15T09:00:00.000Z'],
    ])
  })

  it('refuses the whole file for one bad row and names the line', () => {
    const plan = planCsvImport(header, rows(['1', '41.2'], ['2', '4l.9'], ['3', '40.8']), { value: 'torque' }, defaults)
    expect(plan.groups).toEqual([])
    expect(plan.problemCount).toBe(1)
    expect(plan.problems[0]).toEqual({ line: 3, message: 'Line 3: "4l.9" in column "torque" is not a number' })
  })

  it('names each kind of bad row', () => {
    const plan = planCsvImport(header, rows(
      ['1', ''],
      ['2', '12,5'],
      ['3', '41', 'V'],
      ['4', '41', 'furlongs'],
      ['5', '41', '', 'yesterday'],
    ), { value: 'torque', unit: 'unit', time: 'time' }, defaults)
    expect(plan.problems.map(p => p.message)).toEqual([
      'Line 2: no value in column "torque"',
      'Line 2: no time in column "time"',
      'Line 3: "12,5" in column "torque" is not a number (use a dot as the decimal separator)',
      'Line 3: no time in column "time"',
      'Line 4: unit "V" is a voltage unit; this target is measured in torque (N·m)',
      'Line 4: no time in column "time"',
      'Line 5: unit "furlongs" is not a unit Ratchet knows',
      'Line 5: no time in column "time"',
      'Line 6: "yesterday" in column "time" is not a date and time (use ISO 8601, e.g. 2026-03-14T10:30:00Z)',
    ])
    expect(problemsMessage(plan.problems, plan.problemCount)).toBe('Line 2: no value in column "torque" (and 8 more problems)')
  })

  it('refuses columns the header lacks or names twice, and a unit of another quantity', () => {
    expect(planCsvImport(['a', 'a'], rows(['1', '2']), { value: 'a' }, defaults).problems[0]!.message).toMatch(/names "a" 2 times/)
    expect(planCsvImport(['a'], rows(['1']), { value: 'b' }, defaults).problems[0]!.message).toBe('The header has no column "b" (the value column)')
    expect(planCsvImport(['a'], rows(['1']), { value: 'a' }, { ...defaults, unit: 'kg' }).problems[0]!.message).toMatch(/^Unit: "kg" is a mass unit/)
    expect(planCsvImport(['a'], [], { value: 'a' }, defaults).problems[0]!.message).toBe('The file has a header but no rows')
  })
})

describe('planCsvImport with stated results (u and dof columns)', () => {
  const header = ['value', 'u', 'dof']
  const defaults = { targetUnit: 'N', revision: 'R1', unit: 'N' }
  const columns = { value: 'value', u: 'u', dof: 'dof' }

  it('a row with a u is a reading of its own; blank u rows are samples; blank dof is infinite', () => {
    const plan = planCsvImport(header, rows(['10.1', '', ''], ['10.4', '0.2', '7'], ['10.2', '', ''], ['10,3', '0,1', ''], ['9.9', '0', '']), columns, { ...defaults, decimalComma: true })
    expect(plan.problems).toEqual([])
    expect(plan.groups).toEqual([
      { revision: 'R1', unit: 'N', values: [10.1, 10.2], takenAt: null, firstLine: 2, lastLine: 4 },
      { revision: 'R1', unit: 'N', values: [10.4], takenAt: null, firstLine: 3, lastLine: 3, stated: { u: 0.2, dof: 7 } },
      { revision: 'R1', unit: 'N', values: [10.3], takenAt: null, firstLine: 5, lastLine: 5, stated: { u: 0.1, dof: null } },
      { revision: 'R1', unit: 'N', values: [9.9], takenAt: null, firstLine: 6, lastLine: 6, stated: { u: 0, dof: null } },
    ])
  })

  it('names the line of a bad u, a bad dof, or a dof without u; imports nothing', () => {
    const plan = planCsvImport(header, rows(['1', '-0.1', ''], ['2', 'x', ''], ['3', '0.1', '0'], ['4', '0.1', 'many'], ['5', '', '3']), columns, defaults)
    expect(plan.groups).toEqual([])
    expect(plan.problems.map(p => p.line)).toEqual([2, 3, 4, 5, 6])
    expect(plan.problems[0]!.message).toBe('Line 2: "-0.1" in column "u" is not a standard uncertainty (a number ≥ 0)')
    expect(plan.problems[2]!.message).toMatch(/^Line 4: "0" in column "dof" is not a number of degrees of freedom/)
    expect(plan.problems[4]!.message).toBe('Line 6: degrees of freedom without a standard uncertainty in column "u"')
  })

  it('a dof column needs a u column; a u column the header lacks is named', () => {
    expect(planCsvImport(header, rows(['1', '', '']), { value: 'value', dof: 'dof' }, defaults).problems[0]!.message).toMatch(/degrees-of-freedom column goes with/)
    expect(planCsvImport(header, rows(['1', '', '']), { value: 'value', u: 'sigma' }, defaults).problems[0]!.message).toBe('The header has no column "sigma" (the standard uncertainty column)')
  })

  it(`takes at most ${MAX_STATED_ROWS} stated results per file (each is a reading of its own)`, () => {
    const many = Array.from({ length: MAX_STATED_ROWS + 1 }, (_, i) => [String(10 + i / 1000), '0.1', ''])
    const plan = planCsvImport(header, rows(...many), columns, defaults)
    expect(plan.groups).toEqual([])
    expect(plan.problems).toEqual([{ line: MAX_STATED_ROWS + 2, message: `Line ${MAX_STATED_ROWS + 2}: a file holds at most 1,000 stated results (rows with a u); split the file` }])
    expect(planCsvImport(header, rows(...many.slice(1)), columns, defaults).groups).toHaveLength(MAX_STATED_ROWS)
  })
})
