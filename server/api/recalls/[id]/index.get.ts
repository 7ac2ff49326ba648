/** GET /api/recalls/:id — the campaign: affected items, patients and their status, shelf stock to pull, progress. */
import { IdParams } from '../../../../shared/schemas/cases'
import { dayInZone } from '../../../../shared/utils/dates'
import { recallDetail } from '../../../queries/recalls'
import { logPhiAccess } from '../../../queries/trace'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const db = useDb()
  const d = await recallDetail(db, id, user.facilityId)
  await logPhiAccess(db, user, 'recall.view', { recallId: id }, new Set(d.patients.map((p) => p.mrn)).size, d.patients.length)
  return {
    recall: {
      id: d.recall.id, title: d.recall.title, noticeRef: d.recall.notice_ref, fdaClass: d.recall.fda_class, maker: d.recall.maker,
      receivedOn: d.recall.received_on, status: d.recall.status, closedAt: d.recall.closed_at,
    },
    items: d.items.map((i) => ({ id: i.id, di: i.di, lot: i.lot, serial: i.serial, expiryFrom: i.expiry_from, expiryTo: i.expiry_to, note: i.note })),
    patients: d.patients.map((p) => ({
      id: p.id, status: p.status, note: p.note, updatedBy: p.updated_by_name, updatedAt: p.updated_at,
      caseId: p.case_id, mrn: p.mrn, name: `${p.family_name}, ${p.given_name}`, birthDate: p.birth_date,
      implantedOn: dayInZone(p.recorded_at, p.time_zone), surgeon: p.surgeon_name, facility: p.facility_name,
      item: p.description ?? 'Not in the catalog', di: p.di, lot: p.lot, serial: p.serial, expiry: p.expiry,
    })),
    stock: d.stock.map((s) => ({
      id: s.id, status: s.status, onHandAtMatch: s.on_hand_at_match, onHand: s.on_hand, lot: s.lot, expiry: s.expiry,
      location: s.location, facility: s.facility_name, item: s.description, gtin: s.gtin, updatedBy: s.updated_by_name,
    })),
    progress: d.progress,
  }
})
