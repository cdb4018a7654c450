// Its uploader (still an Engineer) or an Owner; evidence of a signed-off revision only an Owner.
export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const { file, access } = await fileForReader(event, uuidParam(event, 'id'), { allowRigToken: false })
  // the role is today's (read with this request): an uploader since made a Reviewer can't
  if (access.role !== 'owner' && (file.uploaded_by !== access.user!.id || access.role !== 'engineer')) {
    throw createError({ statusCode: 403, message: 'Only the person who uploaded a file (while an Engineer), or an Owner, can delete it' })
  }
  if (file.revision_id && access.role !== 'owner') {
    const rev = await useDb()('revisions').where({ id: file.revision_id }).first('label', 'frozen_at')
    if (rev?.frozen_at) throw createError({ statusCode: 403, message: `Revision ${rev.label} is signed off: only an Owner can remove its evidence` })
  }
  await deleteFile(useDb(), access.actor, { build: access.build, file })
  setResponseStatus(event, 204)
  return null
})
