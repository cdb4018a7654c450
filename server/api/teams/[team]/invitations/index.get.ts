export default defineEventHandler(async (event) => {
  const { team } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'owner')
  return await useDb()('invitations')
    .leftJoin('users', 'users.id', 'invitations.invited_by')
    .where('invitations.team_id', team.id)
    .whereNull('invitations.accepted_at')
    .whereNull('invitations.cancelled_at')
    .orderBy('invitations.created_at', 'desc')
    .select('invitations.id', 'invitations.email', 'invitations.role', 'invitations.expires_at as expiresAt',
      'invitations.created_at as createdAt', 'users.name as invitedBy')
})
