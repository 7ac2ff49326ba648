/**
 * GET /api/health — public liveness check that also proves the database answers. Public (load
 * balancers and API clients call it before signing in; it also hands out the CSRF cookie) and fast: a
 * database that does not answer within two seconds counts as down, so a probe never hangs.
 */
import { sql } from 'kysely'

const DB_TIMEOUT_MS = 2000

export default defineEventHandler(async (event) => {
  setResponseHeader(event, 'cache-control', 'no-store')
  let timer: ReturnType<typeof setTimeout> | undefined
  try {
    await Promise.race([
      sql`SELECT 1`.execute(useDb()),
      new Promise((_, reject) => { timer = setTimeout(() => reject(new Error('timeout')), DB_TIMEOUT_MS) }),
    ])
    return { ok: true, database: 'up' }
  } catch {
    setResponseStatus(event, 503)
    return { ok: false, database: 'down' }
  } finally {
    clearTimeout(timer)
  }
})
