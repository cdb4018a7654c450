export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  return await myOpenFixes(useDb(), user.id)
})
