/**
 * GET /api/admin/audit?actor=&action=&entity=&entityId=&from=&to=&page=&pageSize= — the audit trail of the
 * admin's facility, newest first, with each actor's name. Only admins read it.
 */
import { AuditQuery } from '../../../shared/schemas/admin'
import { facilityFor } from '../../queries/facilities'
import { auditPage } from '../../queries/admin'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'admin')
  const q = await queryWith(event, AuditQuery)
  const db = useDb()
  const facility = await facilityFor(db, user.facilityId)
  return auditPage(db, facility.id, facility.time_zone, q)
})
