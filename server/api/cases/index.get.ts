/**
 * GET /api/cases?day=YYYY-MM-DD — the theatres board: the facility's theatres and their cases on one
 * day (the facility's local day; default today).
 */
import { sql } from 'kysely'
import { CasesQuery } from '../../../shared/schemas/cases'
import { dayInZone } from '../../../shared/utils/dates'
import { facilityFor } from '../../queries/facilities'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const query = await queryWith(event, CasesQuery)
  const db = useDb()
  const facility = await facilityFor(db, user.facilityId)
  const day = query.day ?? dayInZone(Date.now(), facility.time_zone)

  const [theatres, cases] = await Promise.all([
    db.selectFrom('theatres').select(['id', 'code', 'name']).where('facility_id', '=', facility.id).where('active', '=', true).orderBy('code').execute(),
    db.selectFrom('cases as c')
      .innerJoin('patients as p', 'p.id', 'c.patient_id')
      .innerJoin('users as s', 's.id', 'c.surgeon_id')
      .select([
        'c.id', 'c.theatre_id', 'c.scheduled_at', 'c.status', 'c.procedure', 'c.side',
        'p.mrn', 'p.family_name', 'p.given_name', 's.name as surgeon_name',
      ])
      .where('c.facility_id', '=', facility.id)
      .where(sql<string>`(c.scheduled_at AT TIME ZONE ${facility.time_zone})::date`, '=', day)
      .orderBy('c.scheduled_at')
      .execute(),
  ])

  return {
    facility: { id: facility.id, name: facility.name, timeZone: facility.time_zone },
    day,
    theatres: theatres.map((t) => ({
      ...t,
      cases: cases.filter((c) => c.theatre_id === t.id).map((c) => ({
        id: c.id,
        scheduledAt: c.scheduled_at,
        status: c.status,
        procedure: c.procedure,
        side: c.side,
        patient: { mrn: c.mrn, name: `${c.family_name}, ${c.given_name}` },
        surgeon: c.surgeon_name,
      })),
    })),
  }
})
