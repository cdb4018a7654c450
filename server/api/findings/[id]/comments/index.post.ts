// Reviewers comment too: commenting is the one write they have on a finding.
export default defineEventHandler(async (event) => {
  const { findingId, build, user } = await requireFindingRole(event, 'reviewer')
  const body = await bodyAs(event, CommentBody)
  const comment = await useDb().transaction(async (trx) => {
    const finding = await lockFinding(trx, findingId)
    return await addComment(trx, finding, build.team_id, user!.id, body)
  })
  setResponseStatus(event, 201)
  return comment
})
