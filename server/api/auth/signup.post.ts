export default defineEventHandler(async (event) => {
  const body = await bodyAs(event, SignupBody)
  assertPasswordAcceptable(body.password)
  const db = useDb()
  const passwordHash = await hashPassword(body.password)

  const user = await db.transaction(async (trx) => {
    const taken = await trx('users').whereRaw('lower(email) = ?', [body.email]).first('id')
    if (taken) throw createError({ statusCode: 409, message: 'An account with this e-mail address exists; sign in instead', data: { fields: { email: 'Already registered' } } })
    const user = theRow(await trx('users').insert({ email: body.email, name: body.name, password_hash: passwordHash })
      .returning(['id', 'name', 'email', 'session_version']))
    await createTeam(trx, { name: `${body.name}'s team`, ownerId: user.id, personal: true })
    await audit(event, { action: 'user.signed-up', actorId: user.id, actorLabel: user.email }, trx)
    if (body.invitation) await acceptInvitation(trx, userActor(event, user, null), { token: body.invitation, email: user.email })
    return user
  })

  await startSession(event, user)
  setResponseStatus(event, 201)
  return { user: { id: user.id, name: user.name, email: user.email } }
})
