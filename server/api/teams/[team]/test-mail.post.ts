import { testMessage } from '~~/email/testMessage'

export default defineEventHandler(async (event) => {
  const { team, user } = await requireTeamRole(event, getRouterParam(event, 'team')!, 'owner')
  try {
    await sendMail({ to: user.email, ...testMessage({ teamName: team.name, senderName: user.name }) })
  }
  catch {
    throw createError({ statusCode: 503, message: 'The mail server did not accept the message; check the SMTP settings' })
  }
  return { ok: true, sentTo: user.email }
})
