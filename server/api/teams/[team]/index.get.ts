export default defineEventHandler(async (event) => {
  const { team, role } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'reviewer')
  return { ...team, role }
})
