// Every build the caller can see, with their digest choice for it.
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const db = useDb()
  return await db('builds as b')
    .join('teams as t', 't.id', 'b.team_id')
    .join('memberships as m', function () {
      this.on('m.team_id', 'b.team_id').andOnVal('m.user_id', '=', user.id)
    })
    .leftJoin('subscriptions as s', function () {
      this.on('s.build_id', 'b.id').andOnVal('s.user_id', '=', user.id)
    })
    .whereNull('b.archived_at')
    .orderBy(['t.name', 'b.name'])
    .select('b.id', 'b.slug', 'b.name', 't.name as team', 'm.role', db.raw(`${EFFECTIVE_FREQUENCY} as frequency`))
})
