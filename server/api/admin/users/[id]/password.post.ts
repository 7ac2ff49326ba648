/**
 * POST /api/admin/users/:id/password — set a new password the admin gives the person (forgotten password).
 * Checked against the policy with the person's own name and e-mail; the audit row says that it happened, never what. Admin only.
 */
import { sql } from 'kysely'
import { PasswordResetBody, passwordMessage, UserParams } from '../../../../../shared/schemas/admin'
import { facilityFor } from '../../../../queries/facilities'
import { personInFacility } from '../../../../queries/admin'
import { forgetStanding } from '../../../../utils/session'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'admin')
  const { id } = await paramsWith(event, UserParams)
  const body = await readBodyWith(event, PasswordResetBody)
  const db = useDb()
  const facility = await facilityFor(db, user.facilityId)
  const person = await personInFacility(db, id, facility.id)

  const problem = passwordMessage(body.password, { email: person.email, name: person.name })
  if (problem) {
    throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: `Check this field: password — ${problem}`, data: { fields: { password: problem } } })
  }
  const passwordHash = await hashPassword(body.password)
  await db.transaction().execute(async (trx) => {
    await personInFacility(trx, id, facility.id, { forUpdate: true })
    // every session made with the old password ends (a lost or shared device signs out)
    await trx.updateTable('users').set({ password_hash: passwordHash, sessions_valid_after: sql`now()`, updated_at: new Date() }).where('id', '=', id).execute()
    await writeAudit(trx, { actorId: user.id, action: 'user.password_reset', entity: 'user', entityId: id, details: { email: person.email } }, event)
  })
  forgetStanding(id)
  return { ok: true }
})
