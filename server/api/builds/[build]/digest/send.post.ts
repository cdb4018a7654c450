// An Owner sends the digest now to everyone who follows the build by daily or weekly digest.
export default defineEventHandler(async (event) => {
  const { build, user } = await requireBuildRole(event, getRouterParam(event, 'build')!, 'owner')
  const queued = await queueDigests('now', build.id)
  await audit(event, { action: 'digest.sent-now', teamId: build.team_id, actorId: user!.id, actorLabel: user!.email, detail: { build: build.slug, recipients: queued } })
  return { queued }
})
