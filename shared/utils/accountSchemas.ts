import { z } from 'zod'
import { ROLES } from './roles'

// Shared by the forms (validation as you type) and the server (the same rules, enforced).

export const emailField = z.string({ error: 'Enter an e-mail address' })
  .trim()
  .min(1, 'Enter an e-mail address')
  .max(254, 'An e-mail address has at most 254 characters')
  .pipe(z.email({ error: 'That is not an e-mail address' }))
  .transform(s => s.toLowerCase())

export const passwordField = z.string({ error: 'Enter a password' })
  .min(10, 'Use at least 10 characters')
  .max(200, 'Use at most 200 characters')

export const nameField = z.string({ error: 'Enter a name' })
  .trim()
  .min(1, 'Enter a name')
  .max(120, 'A name has at most 120 characters')

export const slugField = z.string()
  .trim()
  .min(2, 'Use at least 2 characters')
  .max(60, 'Use at most 60 characters')
  .regex(/^[a-z0-9]+(?:-[a-z0-9]+)*$/, 'Lower-case letters, digits and single dashes only')

export const roleField = z.enum(ROLES, { error: 'Role must be owner, engineer or reviewer' })

export const SignupBody = z.object({
  name: nameField,
  email: emailField,
  password: passwordField,
  invitation: z.string().max(200).optional(),
})

export const LoginBody = z.object({
  email: emailField,
  password: z.string({ error: 'Enter your password' }).min(1, 'Enter your password').max(200, 'Use at most 200 characters'),
})

export const ForgotBody = z.object({ email: emailField })

export const ResetBody = z.object({
  token: z.string().min(10).max(200),
  password: passwordField,
})

export const AccountBody = z.object({ name: nameField })

export const PasswordChangeBody = z.object({
  currentPassword: z.string().min(1, 'Enter your current password').max(200),
  newPassword: passwordField,
})

export const TeamBody = z.object({
  name: nameField,
  slug: slugField.optional(),
})

export const InviteBody = z.object({
  email: emailField,
  role: roleField,
})

export const RoleBody = z.object({ role: roleField })

export const RigTokenBody = z.object({
  name: z.string().trim().min(1, 'Name the token').max(80, 'Use at most 80 characters'),
  expiresAt: z.iso.datetime({ offset: true, error: 'Use an ISO date and time' }).optional().nullable(),
})

type Issue = z.core.$ZodIssue

/**
 * The issues of a union the input matched no branch of, as the branch it was meant for reports
 * them: the first branch whose fields reserved for another branch (typed `never`) the input
 * doesn't carry. When every branch has such a field set, the union's own message stands.
 */
function unionIssues(issue: Issue): Issue[] {
  if (issue.code !== 'invalid_union' || !Array.isArray(issue.errors)) return [issue]
  const meant = issue.errors.find(branch => !branch.some(i => i.code === 'invalid_type' && i.expected === 'never'))
  if (!meant) return [issue]
  return meant.flatMap(i => unionIssues({ ...i, path: [...issue.path, ...i.path] } as Issue))
}

/** First message per field, for forms. */
export function fieldErrors(error: z.ZodError): Record<string, string> {
  const out: Record<string, string> = {}
  for (const issue of error.issues.flatMap(unionIssues)) {
    const key = issue.path.join('.') || '_'
    out[key] ??= issue.message
  }
  return out
}

/** A URL-safe slug from a name. */
export function slugify(name: string): string {
  return name.toLowerCase().normalize('NFKD').replace(/[\u0300-\u036F]/g, '')
    .replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 50) || 'team'
}
