/** GET /api/facility — the signed-in person's facility with its theatres and surgeons (for forms). */
import { facilityFor } from '../queries/facilities'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const db = useDb()
  const f = await facilityFor(db, user.facilityId)
  const [theatres, surgeons] = await Promise.all([
    db.selectFrom('theatres').select(['id', 'code', 'name']).where('facility_id', '=', f.id).where('active', '=', true).orderBy('code').execute(),
    db.selectFrom('users').select(['id', 'name']).where('role', '=', 'surgeon').where('active', '=', true)
      .where((eb) => eb.or([eb('facility_id', '=', f.id), eb('facility_id', 'is', null)])).orderBy('name').execute(),
  ])
  return { id: f.id, code: f.code, name: f.name, timeZone: f.time_zone, theatres, surgeons }
})
