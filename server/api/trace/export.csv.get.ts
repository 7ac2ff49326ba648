/** GET /api/trace/export.csv?… — the same search as /api/trace, every matching row, as CSV. Logged as PHI access. */
import { TraceQuery } from '../../../shared/schemas/trace'
import { dayInZone } from '../../../shared/utils/dates'
import { logPhiAccess, traceSearch } from '../../queries/trace'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin', 'surgeon')
  const q = await queryWith(event, TraceQuery)
  const db = useDb()
  const { rows } = await traceSearch(db, q, user, { all: true })
  await logPhiAccess(db, user, 'trace.export', q, new Set(rows.map((r) => r.patient_id)).size, rows.length)
  setResponseHeader(event, 'content-type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'content-disposition', 'attachment; filename="trace.csv"')
  return toCsv(
    ['mrn', 'patient', 'birth_date', 'case_date', 'case_id', 'facility', 'surgeon', 'item', 'di', 'lot', 'serial', 'expiry', 'disposition'],
    rows.map((r) => [r.mrn, `${r.family_name}, ${r.given_name}`, r.birth_date, dayInZone(r.scheduled_at, r.time_zone), r.case_id, r.facility_name, r.surgeon_name, r.description ?? '', r.di, r.lot, r.serial, r.expiry, r.disposition]),
  )
})
