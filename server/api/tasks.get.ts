/** GET /api/tasks — what waits for the signed-in person beyond today's board (shown on Today). */
import { dayInZone } from '../../shared/utils/dates'
import { facilityFor } from '../queries/facilities'
import { tasksFor } from '../queries/tasks'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const db = useDb()
  const f = await facilityFor(db, user.facilityId)
  return { tasks: await tasksFor(db, user, f, dayInZone(Date.now(), f.time_zone)) }
})
