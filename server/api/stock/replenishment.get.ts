/** GET /api/stock/replenishment?locationId= — used since the last replenishment, and what to reorder to par. */
import { ReplenishQuery } from '../../../shared/schemas/stock'
import { facilityFor } from '../../queries/facilities'
import { replenishment } from '../../queries/replenishment'
import { locationFor } from '../../queries/stock'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const q = await queryWith(event, ReplenishQuery)
  const db = useDb()
  await locationFor(db, q.locationId, (await facilityFor(db, user.facilityId)).id)
  return replenishment(db, q.locationId)
})
