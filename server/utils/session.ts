import type { H3Event } from 'h3'
import type { User, UserSession } from '#auth-utils'
import { hasRole, type Role } from '../../shared/utils/roles'

import { sessionExpiry } from '../../shared/utils/session-rules'

export type SignedIn = UserSession & { user: User }

const activeCache = new Map<number, { active: boolean; role: string; validAfter: number; at: number }>()

type Standing = 'ok' | 'inactive' | 'superseded'

/**
 * Is the account still active with the same role, and was this session made after its last password
 * reset? Cached for a few seconds to keep hot routes cheap.
 */
async function standing(user: User, loggedInAt: number): Promise<Standing> {
  let hit = activeCache.get(user.id)
  if (!hit || Date.now() - hit.at >= 5000) {
    const row = await useDb().selectFrom('users').select(['active', 'role', 'sessions_valid_after']).where('id', '=', user.id).executeTakeFirst()
    hit = { active: !!row?.active, role: row?.role ?? '', validAfter: row?.sessions_valid_after ? new Date(row.sessions_valid_after).getTime() : 0, at: Date.now() }
    activeCache.set(user.id, hit)
  }
  if (!hit.active || hit.role !== user.role) return 'inactive'
  return loggedInAt < hit.validAfter ? 'superseded' : 'ok'
}

/** Forget what this instance cached about a person, so a password reset takes effect here at once (other instances within 5 s). */
export function forgetStanding(userId: number): void {
  activeCache.delete(userId)
}

/**
 * The first line of every protected route: 401 without a (live) session, 403 when the role is not allowed.
 * Returns a session that is never null, so routes do not repeat the check.
 */
export async function requireRole(event: H3Event, ...allowed: Role[]): Promise<SignedIn> {
  const session = (await getUserSession(event)) as Partial<SignedIn>
  if (!session.user) {
    throw createError({ statusCode: 401, statusMessage: 'Unauthorized', message: 'Sign in to continue.' })
  }
  const expired = sessionExpiry(session)
  if (expired) {
    await clearUserSession(event)
    throw createError({
      statusCode: 401,
      statusMessage: 'Unauthorized',
      message: expired === 'idle' ? 'Signed out after 30 minutes without activity. Sign in again.' : 'Your 12-hour session has ended. Sign in again.',
    })
  }
  const now = await standing(session.user, session.loggedInAt as number)
  if (now !== 'ok') {
    await clearUserSession(event)
    throw createError({
      statusCode: 401,
      statusMessage: 'Unauthorized',
      message: now === 'inactive' ? 'This account is no longer active.' : 'The password of this account was reset. Sign in again with the new password.',
    })
  }
  if (allowed.length && !hasRole(session.user, allowed)) {
    throw createError({ statusCode: 403, statusMessage: 'Forbidden', message: 'Your role does not allow this.' })
  }
  return session as SignedIn
}

/** Any signed-in role. */
export function requireSignedIn(event: H3Event): Promise<SignedIn> {
  return requireRole(event)
}
