import type { Role } from '#shared/utils/roles'

export interface Abilities {
  edit: boolean
  signOff: boolean
  reopen: boolean
  /** Why each is missing, for a `title` on the disabled control. */
  why: { edit: string, signOff: string, reopen: string }
}

/** What a role may do on a build's pages, with the reason when it may not. */
export function abilitiesOf(role: Role | null | undefined): Abilities {
  const edit = role === 'engineer' || role === 'owner'
  const signOff = role === 'reviewer' || role === 'owner'
  const reopen = role === 'owner'
  return {
    edit,
    signOff,
    reopen,
    why: {
      edit: edit ? '' : 'Reviewers read everything and sign off revisions; only Engineers and Owners change data',
      signOff: signOff ? '' : 'Engineers can\'t sign off revisions; a Reviewer or an Owner does',
      reopen: reopen ? '' : 'Only an Owner can reopen a signed-off revision',
    },
  }
}
