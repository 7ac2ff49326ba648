// How long a session lives: one shift (12 h) from sign-in, and 30 minutes without activity.
export const SHIFT_MS = 12 * 60 * 60 * 1000
export const IDLE_MS = 30 * 60 * 1000

/** Why a session is no longer good ('shift' or 'idle'), or null when it is. */
export function sessionExpiry(s: { loggedInAt?: unknown; lastSeenAt?: unknown }, now = Date.now()): 'shift' | 'idle' | null {
  if (typeof s.loggedInAt !== 'number' || now - s.loggedInAt > SHIFT_MS) return 'shift'
  if (typeof s.lastSeenAt !== 'number' || now - s.lastSeenAt > IDLE_MS) return 'idle'
  return null
}
