const ANSWER = { ok: true, message: 'If an account uses this address, we have sent it a link to choose a new password. The link works once, for one hour.' }

// The same work whatever the address: record the request and nudge the queue, which looks the
// address up and sends the e-mail (server/utils/access/resets.ts).
export default defineEventHandler(async (event) => {
  const { email } = await bodyAs(event, ForgotBody)
  try {
    await requestReset(useDb(), { email, ip: clientIp(event), userAgent: getRequestHeader(event, 'user-agent') ?? '' })
  }
  catch (err) {
    if (!(err instanceof ResetThrottled)) throw err
    setResponseHeader(event, 'Retry-After', err.retryAfterSeconds)
    throw createError({ statusCode: 429, message: err.message })
  }
  nudgeResets()
  return ANSWER
})
