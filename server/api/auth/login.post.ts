// A fixed hash to verify against when the address is unknown, so a miss costs the same time.
let dummyHash: Promise<string> | undefined

export default defineEventHandler(async (event) => {
  const body = await bodyAs(event, LoginBody)
  const ip = clientIp(event)
  const db = useDb()

  await assertNotThrottled(event, body.email, ip)

  const user = await db('users').whereRaw('lower(email) = ?', [body.email]).first('id', 'name', 'email', 'password_hash', 'session_version')
  dummyHash ??= hashPassword('not-a-real-password-0000')
  const ok = await verifyPassword(user?.password_hash ?? await dummyHash, body.password)

  if (!user || !ok) {
    await db('login_failures').insert({ email: body.email, ip })
    // the same record whether the address is known or not
    await audit(event, { action: 'auth.sign-in-failed', actorId: user?.id ?? null, actorLabel: body.email })
    throw createError({ statusCode: 401, message: 'Wrong e-mail address or password' })
  }

  await startSession(event, user)
  const teams = await db('memberships').where({ user_id: user.id }).pluck('team_id')
  await audit(event, { action: 'auth.signed-in', actorId: user.id, actorLabel: user.email, detail: { teams: teams.length } })
  return { user: { id: user.id, name: user.name, email: user.email } }
})
