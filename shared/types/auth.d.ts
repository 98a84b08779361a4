declare module '#auth-utils' {
  interface User {
    id: string
    name: string
    email: string
  }
  interface UserSession {
    organisationId?: string
    signedInAt?: number
    /** Made at sign-in; signing out lists it in ended_sessions (server/utils/ended-sessions.ts). */
    sessionId?: string
  }
}

export {}
