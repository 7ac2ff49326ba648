/**
 * POST /api/cases — book a case: the patient (found by MRN in the facility, or added), procedure, side,
 * surgeon, theatre and local time. Idempotent by clientKey. Records the facility's current rule profile.
 */
import { sql } from 'kysely'
import { NewCaseBody } from '../../../shared/schemas/cases'
import { facilityFor } from '../../queries/facilities'
import { latestRuleProfile } from '../../queries/cases'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'surgeon', 'coordinator', 'admin')
  const body = await readBodyWith(event, NewCaseBody)
  const db = useDb()
  const facility = await facilityFor(db, user.facilityId)

  const existing = await db.selectFrom('cases').select(['id', 'facility_id']).where('client_key', '=', body.clientKey).executeTakeFirst()
  if (existing) return { id: existing.id, replayed: true }

  const [theatre, surgeon] = await Promise.all([
    db.selectFrom('theatres').select(['id', 'active']).where('id', '=', body.theatreId).where('facility_id', '=', facility.id).executeTakeFirst(),
    db.selectFrom('users').select('id').where('id', '=', body.surgeonId).where('role', '=', 'surgeon').where('active', '=', true)
      .where((eb) => eb.or([eb('facility_id', '=', facility.id), eb('facility_id', 'is', null)])).executeTakeFirst(),
  ])
  const fields: Record<string, string> = {}
  if (!theatre) fields.theatreId = 'Choose one of this facility’s theatres.'
  else if (!theatre.active) fields.theatreId = 'This theatre is closed to new cases. Choose another.'
  if (!surgeon) fields.surgeonId = 'Choose an active surgeon of this facility.'
  if (Object.keys(fields).length) {
    throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: Object.values(fields).join(' '), data: { fields } })
  }

  return await db.transaction().execute(async (trx) => {
    const p = body.patient
    const found = await trx.selectFrom('patients').selectAll().where('facility_id', '=', facility.id).where('mrn', '=', p.mrn).executeTakeFirst()
    if (found && (found.family_name.toLowerCase() !== p.familyName.toLowerCase() || found.birth_date !== p.birthDate)) {
      throw createError({
        statusCode: 409, statusMessage: 'Conflict',
        message: 'This MRN belongs to a patient with another name or date of birth. Check the wristband.',
        data: { fields: { 'patient.mrn': 'This MRN is already used for another name or date of birth.' } },
      })
    }
    const patientId = found?.id ?? (await trx.insertInto('patients').values({
      facility_id: facility.id, mrn: p.mrn, family_name: p.familyName, given_name: p.givenName, birth_date: p.birthDate, sex: p.sex,
    }).returning('id').executeTakeFirstOrThrow()).id

    const profile = await latestRuleProfile(trx, facility.id)
    const row = await trx.insertInto('cases').values({
      facility_id: facility.id, theatre_id: body.theatreId, patient_id: patientId, procedure: body.procedure, side: body.side,
      surgeon_id: body.surgeonId, circulator_id: user.role === 'circulator' ? user.id : null,
      scheduled_at: sql<Date>`(${`${body.scheduledDay} ${body.scheduledTime}`}::timestamp AT TIME ZONE ${facility.time_zone})` as never,
      rule_profile_id: profile?.id ?? null, client_key: body.clientKey, created_by: user.id,
    }).returning('id').executeTakeFirstOrThrow()
    await writeAudit(trx, { actorId: user.id, action: 'case.create', entity: 'case', entityId: row.id, details: { patientId, procedure: body.procedure, side: body.side } }, event)
    setResponseStatus(event, 201)
    return { id: row.id, replayed: false }
  })
})
