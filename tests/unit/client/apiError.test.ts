import { FetchError } from 'ofetch'
import { describe, expect, it } from 'vitest'
import { apiError } from '../../../utils/apiError'

function refused(status: number, data: unknown): FetchError {
  const e = new FetchError(`[POST] "/x": ${status}`)
  e.statusCode = status
  e.data = data
  return e
}

describe('apiError: the server\'s answer out of a failed request', () => {
  it.each([
    [refused(422, { message: 'Check the highlighted fields', data: { fields: { unit: 'Not a unit of speed' } } }), { status: 422, message: 'Check the highlighted fields', fields: { unit: 'Not a unit of speed' } }],
    [refused(409, { message: 'Someone moved it first' }), { status: 409, message: 'Someone moved it first', fields: {} }],
    [refused(502, undefined), { status: 502, message: 'The server answered 502', fields: {} }],
    [new TypeError('fetch failed'), { status: 0, message: 'The server could not be reached; check your connection', fields: {} }],
    [undefined, { status: 0, message: 'The server could not be reached; check your connection', fields: {} }],
  ])('%s', (err, info) => {
    expect(apiError(err)).toEqual(info)
  })
})
