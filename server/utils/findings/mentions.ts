import { mentionEmail } from '~~/email/mention'
import { sendOnce } from '../notify/digests'

// E-mails to the people a comment mentions. addComment writes a mention_notices row per person
// in the comment's transaction; the queue sends them (nudged after the commit, and swept every
// minute for a nudge that was lost). A person who left the team since is not written to.

const BATCH = 50

/** Sends the pending mention e-mails; answers how many notices it settled. */
export async function deliverMentions(): Promise<number> {
  const db = useDb()
  // notices of people no longer in the finding's team: settled without an e-mail
  const dropped = await db('mention_notices as n')
    .whereNull('n.sent_at')
    .whereNotExists(q => q.select(db.raw('1')).from('finding_comments as c').join('findings as f', 'f.id', 'c.finding_id').join('builds as b', 'b.id', 'f.build_id')
      .join('memberships as m', 'm.team_id', 'b.team_id').whereRaw('c.id = n.comment_id').whereRaw('m.user_id = n.user_id'))
    .update({ sent_at: db.fn.now() })
  let settled = dropped
  // a batch at a time, until none is left
  for (;;) {
    const sent = await sendBatch()
    settled += sent
    if (sent < BATCH) return settled
  }
}

/** Sends up to BATCH pending mention e-mails; answers how many. */
async function sendBatch(): Promise<number> {
  const db = useDb()
  const pending = await db('mention_notices as n')
    .join('finding_comments as c', 'c.id', 'n.comment_id')
    .join('findings as f', 'f.id', 'c.finding_id')
    .join('builds as b', 'b.id', 'f.build_id')
    .join('users as u', 'u.id', 'n.user_id')
    .leftJoin('users as a', 'a.id', 'c.author_id')
    .whereNull('n.sent_at')
    .orderBy('n.created_at')
    .limit(BATCH)
    .select('n.comment_id', 'n.user_id', 'u.email', 'c.body', 'a.name as author_name', 'f.id as finding_id', 'f.title', 'b.id as build_id', 'b.name as build_name', 'b.slug') as {
    comment_id: string
    user_id: string
    email: string
    body: string
    author_name: string | null
    finding_id: string
    title: string
    build_id: string
    build_name: string
    slug: string
  }[]
  for (const n of pending) {
    // at most once per person and comment, even with several app servers at it
    await sendOnce({
      userId: n.user_id,
      buildId: n.build_id,
      key: `mention:${n.comment_id}`,
      eventIds: [],
      to: n.email,
      message: mentionEmail({
        authorName: n.author_name ?? 'A former member',
        findingTitle: n.title,
        buildName: n.build_name,
        comment: n.body,
        link: appLink(`/builds/${n.slug}/findings/${n.finding_id}`),
      }),
    })
    await db('mention_notices').where({ comment_id: n.comment_id, user_id: n.user_id }).update({ sent_at: db.fn.now() })
  }
  return pending.length
}
