import type { Role } from '../utils/roles'

declare module '#auth-utils' {
  interface User {
    id: number
    name: string
    email: string
    role: Role
    facilityId: number | null
    facilityName: string | null
  }
  interface UserSession {
    /** epoch ms of sign-in: the session ends 12 h later (a shift) */
    loggedInAt: number
    /** epoch ms of the last request: the session ends after 30 min idle */
    lastSeenAt: number
  }
}

export {}
