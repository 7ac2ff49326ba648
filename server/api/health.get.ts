/** GET /api/health — public liveness check that also proves the database answers. */
import { sql } from 'kysely'

export default defineEventHandler(async (event) => {
  try {
    await sql`SELECT 1`.execute(useDb())
    return { ok: true, database: 'up' }
  } catch {
    setResponseStatus(event, 503)
    return { ok: false, database: 'down' }
  }
})
