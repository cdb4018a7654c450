export default defineEventHandler(async (event) => {
  refuseRigToken(event)
  const user = await requireUser(event)
  const db = useDb()
  return await db('teams')
    .join('memberships', 'memberships.team_id', 'teams.id')
    .where('memberships.user_id', user.id)
    .orderBy('teams.name')
    .select('teams.id', 'teams.name', 'teams.slug', 'memberships.role', 'teams.personal', 'teams.demo',
      db('memberships as m').whereRaw('m.team_id = teams.id').count('*').as('members'),
      db('builds as b').whereRaw('b.team_id = teams.id').whereNull('b.archived_at').count('*').as('builds'))
})
