// Sign-off: a Reviewer or an Owner freezes the revision; an Engineer can't sign off their own work.
export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const { build, role, user } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'reviewer')
  if (role === 'engineer') throw createError({ statusCode: 403, message: 'Signing off a revision is for a Reviewer or an Owner' })
  const label = textParam(event, 'label')
  const db = useDb()
  const id = await db.transaction(async (trx) => {
    const revision = await findRevision(trx, build.id, label, 'update')
    await freezeRevision(trx, revision, user!.id)
    await audit(event, { action: 'revision.frozen', teamId: build.team_id, actorId: user!.id, actorLabel: user!.email, detail: { build: build.slug, revision: revision.label } }, trx)
    return revision.id
  })
  const [view] = await listRevisions(db, build.id, id)
  return view
})
