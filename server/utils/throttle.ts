import { sql } from 'kysely'
import type { Db } from './db'

// Failed sign-ins allowed per minute before answering 429 (OWASP Authentication Cheat Sheet: throttle per
// account and per source). Per address the limit is higher: a theatre's devices may share one NAT address.
export const WINDOW_S = 60
export const MAX_FAILS_PER_ACCOUNT = 5
export const MAX_FAILS_PER_ADDRESS = 20

/** Seconds to wait before another try, or 0 when a try is allowed now. */
export async function loginRetryAfter(db: Db, email: string, ip: string): Promise<number> {
  const row = await db
    .selectFrom('login_attempts')
    .select([
      sql<number>`count(*) FILTER (WHERE email = ${email} AND at > coalesce((SELECT max(at) FROM login_attempts s WHERE s.email = ${email} AND s.success), '-infinity'))`.as('by_account'),
      sql<number>`count(*) FILTER (WHERE ip = ${ip})`.as('by_address'),
      sql<string | null>`min(at) FILTER (WHERE email = ${email})`.as('oldest_account'),
      sql<string | null>`min(at) FILTER (WHERE ip = ${ip})`.as('oldest_address'),
    ])
    .where('success', '=', false)
    .where(sql<boolean>`at > now() - make_interval(secs => ${WINDOW_S})`)
    .where((eb) => eb.or([eb('email', '=', email), eb('ip', '=', ip)]))
    .executeTakeFirst()
  const byAccount = Number(row?.by_account ?? 0)
  const byAddress = Number(row?.by_address ?? 0)
  const wait = (oldest: string | null) =>
    oldest ? Math.max(1, Math.ceil(WINDOW_S - (Date.now() - new Date(oldest).getTime()) / 1000)) : WINDOW_S
  if (byAccount >= MAX_FAILS_PER_ACCOUNT) return wait(row?.oldest_account ?? null)
  if (byAddress >= MAX_FAILS_PER_ADDRESS) return wait(row?.oldest_address ?? null)
  return 0
}

export async function recordLoginAttempt(db: Db, email: string, ip: string, success: boolean): Promise<void> {
  await db.insertInto('login_attempts').values({ email, ip, success }).execute()
}
