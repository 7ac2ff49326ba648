/** GET /api/admin/theatres — the facility's theatres, closed ones too, with how many cases each holds. */
import { sql } from 'kysely'
import { facilityFor } from '../../../queries/facilities'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'admin')
  const db = useDb()
  const f = await facilityFor(db, user.facilityId)
  return db.selectFrom('theatres as t').select(['t.id', 't.code', 't.name', 't.active',
    sql<number>`(SELECT count(*)::int FROM cases c WHERE c.theatre_id = t.id)`.as('cases')])
    .where('t.facility_id', '=', f.id).orderBy('t.code').execute()
})
