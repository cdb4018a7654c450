// The shape of the sealed session cookie (nuxt-auth-utils).
declare module '#auth-utils' {
  interface User {
    id: string
    name: string
    email: string
  }
  interface UserSession {
    /** must equal users.session_version, or the session has been ended (password reset) */
    sessionVersion: number
    /** this session's id; signing out records it in revoked_sessions */
    sid?: string
    loggedInAt: number
  }
}

export {}
