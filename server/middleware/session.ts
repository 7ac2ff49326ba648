import { sessionExpiry } from '../../shared/utils/session-rules'

// Ends sessions past a shift or idle for 30 minutes on any request (pages included), and keeps the
// idle clock of live sessions fresh. Routes still check the session themselves (requireRole).
export default defineEventHandler(async (event) => {
  const path = event.path
  if (path.startsWith('/_nuxt/') || path.startsWith('/__nuxt') || path === '/favicon.svg') return
  const session = await getUserSession(event)
  if (!session.user) return
  const now = Date.now()
  if (sessionExpiry(session, now)) {
    await clearUserSession(event)
    return
  }
  // Rewrite the cookie at most once a minute; SSE streams do not count as activity.
  if (now - (session.lastSeenAt ?? 0) > 60_000 && !path.includes('/events')) {
    await setUserSession(event, { loggedInAt: session.loggedInAt!, lastSeenAt: now })
  }
})
