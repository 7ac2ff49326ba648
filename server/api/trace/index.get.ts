/**
 * GET /api/trace?lot=…&lotMatch=exact|prefix&serial=…&gtin=…&itemId=…&from=…&to=…&surgeonId=…&sort=…&page=…
 * Find every patient who received a lot, serial or device. Coordinators and admins; surgeons see only
 * their own patients. Each search is written to the PHI access log.
 */
import { TraceQuery } from '../../../shared/schemas/trace'
import { dayInZone } from '../../../shared/utils/dates'
import { logPhiAccess, traceSearch } from '../../queries/trace'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin', 'surgeon')
  const q = await queryWith(event, TraceQuery)
  const db = useDb()
  const { rows, total } = await traceSearch(db, q, user)
  const patients = new Set(rows.map((r) => r.patient_id)).size
  await logPhiAccess(db, user, 'trace.search', q, patients, rows.length)
  return {
    total, page: q.page, pageSize: q.pageSize,
    rows: rows.map((r) => ({
      id: r.id, caseId: r.case_id,
      patient: { mrn: r.mrn, name: `${r.family_name}, ${r.given_name}`, birthDate: r.birth_date },
      caseDate: dayInZone(r.scheduled_at, r.time_zone), implantedAt: new Date(r.recorded_at).toISOString(),
      surgeon: r.surgeon_name, facility: r.facility_name, side: r.side,
      item: r.description ?? 'Not in the catalog', reference: r.reference, di: r.di, lot: r.lot, serial: r.serial, expiry: r.expiry,
      disposition: r.disposition,
    })),
  }
})
