/** GET /api/admin/settings — the facility's settings and every version of its sizing rules. Admin only. */
import { facilityFor } from '../../queries/facilities'
import { settingsView } from '../../queries/admin'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'admin')
  const db = useDb()
  const facility = await facilityFor(db, user.facilityId)
  return settingsView(db, facility.id)
})
