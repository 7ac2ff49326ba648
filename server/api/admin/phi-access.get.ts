/**
 * GET /api/admin/phi-access?user=&action=&from=&to=&page=&pageSize= — who searched patient data (trace, exports),
 * with what query and how many patients and rows came back, newest first. Only admins read it.
 */
import { PhiAccessQuery } from '../../../shared/schemas/admin'
import { facilityFor } from '../../queries/facilities'
import { phiAccessPage } from '../../queries/admin'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'admin')
  const q = await queryWith(event, PhiAccessQuery)
  const db = useDb()
  const facility = await facilityFor(db, user.facilityId)
  return phiAccessPage(db, facility.id, facility.time_zone, q)
})
