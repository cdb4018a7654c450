// One-click unsubscribe (RFC 8058): the signed link is the permission; no session needed.
export default defineEventHandler(async (event) => {
  const q = { ...getQuery(event) }
  if (!q.u) {
    const body = await readBody(event).catch(() => ({}))
    Object.assign(q, typeof body === 'object' && body ? body : {})
  }
  const { u, b, s } = parseOr400(UnsubscribeQuery, q)
  if (!verifyUnsubscribe(u, b, s)) throw createError({ statusCode: 400, message: 'This unsubscribe link is not valid' })
  const db = useDb()
  const build = await db('builds').where({ id: b }).first('name')
  const user = await db('users').where({ id: u }).first('id')
  if (!build || !user) throw createError({ statusCode: 404, message: 'Nothing to unsubscribe from' })
  await setSubscription(db, u, b, 'off')
  return { ok: true, build: build.name as string, message: `You will get no more e-mail about ${build.name}.` }
})
