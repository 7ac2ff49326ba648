/** GET /api/admin/users?role=&active=true|false|all&q= — the people of the admin's facility. Admin only. */
import { UsersQuery } from '../../../../shared/schemas/admin'
import { facilityFor } from '../../../queries/facilities'
import { listPeople } from '../../../queries/admin'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'admin')
  const q = await queryWith(event, UsersQuery)
  const db = useDb()
  const facility = await facilityFor(db, user.facilityId)
  return { facility: { id: facility.id, name: facility.name, timeZone: facility.time_zone }, people: await listPeople(db, facility.id, q) }
})
