/**
 * POST /api/auth/login — sign in with e-mail and password.
 * A vague 401 on any failure (unknown account, wrong password, inactive); 429 with Retry-After when throttled.
 */
import { sql } from 'kysely'
import { LoginBody } from '../../../shared/schemas/auth'

// A real scrypt hash to verify against when the account does not exist, so both failures take as long.
let decoyHash: Promise<string> | undefined

export default defineEventHandler(async (event) => {
  const body = await readBodyWith(event, LoginBody)
  const email = body.email.toLowerCase()
  const ip = clientIp(event)
  const db = useDb()

  const retryAfter = await loginRetryAfter(db, email, ip)
  if (retryAfter > 0) {
    setResponseHeader(event, 'Retry-After', retryAfter)
    await writeAudit(db, { actorId: null, action: 'auth.login_throttled', entity: 'user', details: { email } }, event)
    throw createError({
      statusCode: 429,
      statusMessage: 'Too Many Requests',
      message: `Too many attempts. Wait ${retryAfter} seconds, then try again.`,
    })
  }

  const user = await db.selectFrom('users').selectAll().where(sql`lower(email)`, '=', email).executeTakeFirst()
  decoyHash ??= hashPassword('isthmus-decoy-password')
  const ok = user
    ? await verifyPassword(user.password_hash, body.password)
    : (await verifyPassword(await decoyHash, body.password), false)

  if (!user || !ok || !user.active) {
    await recordLoginAttempt(db, email, ip, false)
    await writeAudit(db, { actorId: user?.id ?? null, action: 'auth.login_failed', entity: 'user', entityId: user?.id, details: { email } }, event)
    throw createError({ statusCode: 401, statusMessage: 'Unauthorized', message: 'E-mail or password is not right.' })
  }

  await recordLoginAttempt(db, email, ip, true)
  const now = Date.now()
  const facility = user.facility_id
    ? await db.selectFrom('facilities').select('name').where('id', '=', user.facility_id).executeTakeFirst()
    : undefined
  const profile = {
    id: user.id, name: user.name, email: user.email, role: user.role,
    facilityId: user.facility_id, facilityName: facility?.name ?? null,
  }
  // A new session on every sign-in (no fixation): replace, do not merge.
  await replaceUserSession(event, { user: profile, loggedInAt: now, lastSeenAt: now })
  await writeAudit(db, { actorId: user.id, action: 'auth.login', entity: 'user', entityId: user.id }, event)
  return profile
})
