// Reviewers comment too: commenting is the one write they have on a finding. A comment is not a
// change to the finding itself, so it neither locks it nor raises its version.
export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const { finding, build, user, actor } = await requireFindingRole(event, 'reviewer')
  const body = await bodyAs(event, CommentBody)
  const comment = await useDb().transaction(trx => addComment(trx, actor, { finding, teamId: build.team_id, body }))
  // the people it mentions get an e-mail
  if (comment.mentions.some(m => m.id !== user!.id)) nudgeMentions()
  setResponseStatus(event, 201)
  return comment
})
