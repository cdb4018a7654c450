// The bytes of an evidence file (Range, If-None-Match; `?download=1` asks for an attachment).
export default defineEventHandler(async (event) => {
  const { file } = await fileForReader(event, uuidParam(event, 'id'), { allowRigToken: true })
  await sendStoredFile(event, file)
})
