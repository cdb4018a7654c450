import type { H3Event } from 'h3'

/** Routes that act on a team or many builds don't take a rig token: it belongs to one build. */
export function refuseRigToken(event: H3Event) {
  if (bearerToken(event)) {
    throw createError({ statusCode: 403, message: 'A rig token acts on its own build only; use its build routes' })
  }
}
