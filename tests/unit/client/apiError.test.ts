import { FetchError } from 'ofetch'
import { describe, expect, it } from 'vitest'
import { apiError, placeRefusal, plainMessage } from '../../../utils/apiError'

function refused(status: number, data: unknown): FetchError {
  const e = new FetchError(`[POST] "/x": ${status}`)
  e.statusCode = status
  e.data = data
  return e
}

describe('apiError: the server\'s answer out of a failed request', () => {
  it.each([
    [refused(422, { message: 'Check the highlighted fields', data: { fields: { unit: 'Not a unit of speed' } } }), { status: 422, message: 'Check the highlighted fields', fields: { unit: 'Not a unit of speed' }, raw: 'Check the highlighted fields' }],
    [refused(409, { message: 'Someone moved it first' }), { status: 409, message: 'Someone moved it first', fields: {}, raw: 'Someone moved it first' }],
    // the server names the field's path before its message; a person reads it without
    [refused(400, { message: 'unit: Unknown unit "kgg"', data: { fields: { unit: 'Unknown unit "kgg"' } } }), { status: 400, message: 'Unknown unit "kgg"', fields: { unit: 'Unknown unit "kgg"' }, raw: 'unit: Unknown unit "kgg"' }],
    [refused(502, undefined), { status: 502, message: 'The server answered 502', fields: {} }],
    [new TypeError('fetch failed'), { status: 0, message: 'The server could not be reached; check your connection', fields: {} }],
    [undefined, { status: 0, message: 'The server could not be reached; check your connection', fields: {} }],
  ])('%s', (err, info) => {
    expect(apiError(err)).toEqual(info)
  })
})

describe('plainMessage', () => {
  it.each([
    ['label: R2 already exists in this build', { label: 'R2 already exists in this build' }, 'R2 already exists in this build'],
    ['parameters.0.name: Give the parameter a name', { 'parameters.0.name': 'Give the parameter a name' }, 'Give the parameter a name'],
    // a colon that is no field's path stays
    ['Ratio: 3 is too high', {}, 'Ratio: 3 is too high'],
    ['note: kept', { unit: 'x' }, 'note: kept'],
  ])('%s', (message, fields, plain) => {
    expect(plainMessage(message, fields)).toBe(plain)
  })
})

describe('placeRefusal: each message once, under its field when the form shows it', () => {
  const shown = ['unit', 'values', 'parameters', /^parameters\.\d+\.(name|value)$/]
  it('puts a shown field\'s message under it and leaves the banner empty', () => {
    expect(placeRefusal({ message: 'Unknown unit "kgg"', fields: { unit: 'Unknown unit "kgg"' } }, shown)).toEqual({ fields: { unit: 'Unknown unit "kgg"' }, rest: '' })
  })
  it('maps a row\'s path to the field that shows it: the exact row first, else the list', () => {
    expect(placeRefusal({ message: 'x', fields: { 'values.3': 'Not a finite number' } }, shown)).toEqual({ fields: { values: 'Not a finite number' }, rest: '' })
    expect(placeRefusal({ message: 'x', fields: { 'parameters.1.name': 'Give it a name' } }, shown)).toEqual({ fields: { 'parameters.1.name': 'Give it a name' }, rest: '' })
    expect(placeRefusal({ message: 'x', fields: { 'parameters.1.unit': 'Unknown unit' } }, shown)).toEqual({ fields: { parameters: 'Unknown unit' }, rest: '' })
  })
  it('gives the field the whole message was about that message, not its short note', () => {
    const info = apiError(refused(409, { message: 'label: A revision labelled "R2" exists in this build; choose another', data: { fields: { label: 'Taken' } } }))
    expect(placeRefusal(info, ['label'])).toEqual({ fields: { label: 'A revision labelled "R2" exists in this build; choose another' }, rest: '' })
  })
  it('keeps for the banner what no field shows, and the whole message when nothing is placed', () => {
    expect(placeRefusal({ message: 'm', fields: { unit: 'bad unit', revision: 'R9 is signed off' } }, shown)).toEqual({ fields: { unit: 'bad unit' }, rest: 'R9 is signed off' })
    expect(placeRefusal({ message: 'R9 is signed off', fields: { revision: 'R9 is signed off' } }, shown)).toEqual({ fields: {}, rest: 'R9 is signed off' })
    expect(placeRefusal({ message: 'Someone moved it first', fields: {} }, shown)).toEqual({ fields: {}, rest: 'Someone moved it first' })
  })
})
