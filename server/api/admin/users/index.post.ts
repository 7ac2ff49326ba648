/**
 * POST /api/admin/users — add a person to the admin's facility with an initial password the admin hands over.
 * Idempotent by clientKey; a taken e-mail (any case) is a 409 that names the field. Admin only.
 */
import { NewUserBody } from '../../../../shared/schemas/admin'
import { facilityFor } from '../../../queries/facilities'
import { auditablePerson, duplicateEmail, emailTaken, personInFacility, personView } from '../../../queries/admin'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'admin')
  const body = await readBodyWith(event, NewUserBody)
  const db = useDb()
  const facility = await facilityFor(db, user.facilityId)

  const replayOf = async () => {
    const r = await db.selectFrom('users').select('id').where('client_key', '=', body.clientKey).where('facility_id', '=', facility.id).executeTakeFirst()
    return r ? { person: personView(await personInFacility(db, r.id, facility.id)), replayed: true } : null
  }
  const replay = await replayOf()
  if (replay) return replay
  if (await emailTaken(db, body.email)) duplicateEmail()

  // hashed before the transaction: scrypt takes a moment and should not hold a connection
  const passwordHash = await hashPassword(body.password)
  try {
    return await db.transaction().execute(async (trx) => {
      const row = await trx.insertInto('users').values({
        name: body.name, email: body.email, role: body.role, facility_id: facility.id, password_hash: passwordHash, client_key: body.clientKey,
      }).returning('id').executeTakeFirstOrThrow()
      const created = await personInFacility(trx, row.id, facility.id)
      await writeAudit(trx, {
        actorId: user.id, action: 'user.create', entity: 'user', entityId: row.id,
        details: { before: null, after: { ...auditablePerson(created), facilityId: facility.id } },
      }, event)
      setResponseStatus(event, 201)
      return { person: personView(created), replayed: false }
    })
  } catch (e) {
    const err = e as { code?: string; constraint?: string }
    // two requests at once: the unique indexes decide, and the answer says which in words
    if (err?.code === '23505' && err.constraint === 'users_email_key') duplicateEmail()
    if (err?.code === '23505') {
      const again = await replayOf()
      if (again) return again
    }
    mapDbError(e, 'person')
  }
})
