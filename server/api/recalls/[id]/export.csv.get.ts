/** GET /api/recalls/:id/export.csv — the whole campaign: every affected patient and shelf line with status. */
import { IdParams } from '../../../../shared/schemas/cases'
import { dayInZone } from '../../../../shared/utils/dates'
import { recallDetail } from '../../../queries/recalls'
import { logPhiAccess } from '../../../queries/trace'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const db = useDb()
  const d = await recallDetail(db, id, user.facilityId)
  await logPhiAccess(db, user, 'recall.export', { recallId: id }, new Set(d.patients.map((p) => p.mrn)).size, d.patients.length)
  setResponseHeader(event, 'content-type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'content-disposition', `attachment; filename="recall-${id}.csv"`)
  return toCsv(
    ['type', 'status', 'mrn', 'patient', 'implanted_on', 'surgeon', 'facility', 'location', 'item', 'di', 'lot', 'serial', 'expiry', 'note', 'updated_by'],
    [
      ...d.patients.map((p) => ['patient', p.status, p.mrn, `${p.family_name}, ${p.given_name}`, dayInZone(p.recorded_at, p.time_zone), p.surgeon_name, p.facility_name, '', p.description ?? '', p.di, p.lot, p.serial, p.expiry, p.note, p.updated_by_name]),
      ...d.stock.map((s) => ['stock', s.status, '', '', '', '', s.facility_name, s.location, s.description, s.gtin, s.lot, '', s.expiry, `on hand at match: ${s.on_hand_at_match}`, s.updated_by_name]),
    ],
  )
})
