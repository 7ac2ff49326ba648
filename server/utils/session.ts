import type { H3Event } from 'h3'
import type { User, UserSession } from '#auth-utils'
import { hasRole, type Role } from '../../shared/utils/roles'

import { sessionExpiry } from '../../shared/utils/session-rules'

export type SignedIn = UserSession & { user: User }

const activeCache = new Map<number, { active: boolean; role: string; at: number }>()

/** Is the account still active with the same role? Cached for a few seconds to keep hot routes cheap. */
async function stillActive(user: User): Promise<boolean> {
  const hit = activeCache.get(user.id)
  if (hit && Date.now() - hit.at < 5000) return hit.active && hit.role === user.role
  const row = await useDb().selectFrom('users').select(['active', 'role']).where('id', '=', user.id).executeTakeFirst()
  activeCache.set(user.id, { active: !!row?.active, role: row?.role ?? '', at: Date.now() })
  return !!row?.active && row.role === user.role
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
  if (!(await stillActive(session.user))) {
    await clearUserSession(event)
    throw createError({ statusCode: 401, statusMessage: 'Unauthorized', message: 'This account is no longer active.' })
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
