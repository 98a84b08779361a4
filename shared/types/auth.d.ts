declare module '#auth-utils' {
  interface User {
    id: string
    name: string
    email: string
  }
  interface UserSession {
    organisationId?: string
    signedInAt?: number
  }
}

export {}
