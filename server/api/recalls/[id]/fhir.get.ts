/** GET /api/recalls/:id/fhir — the campaign's affected Devices (each with its Patient) as a FHIR R4 Bundle. */
import { IdParams } from '../../../../shared/schemas/cases'
import { recallToFhirBundle } from '../../../../shared/utils/fhir'
import { recallDetail } from '../../../queries/recalls'
import { caseSnapshot } from '../../../queries/snapshot'
import { logPhiAccess } from '../../../queries/trace'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const db = useDb()
  const d = await recallDetail(db, id, user.facilityId)
  const wanted = new Set(d.patients.map((p) => p.case_item_id))
  const devices = []
  for (const caseId of [...new Set(d.patients.map((p) => p.case_id))]) {
    const s = await caseSnapshot(db, caseId)
    for (const item of s.items.filter((i) => wanted.has(i.id))) {
      devices.push({ patient: s.patient, item, caseId, implantedOn: item.recordedAt.slice(0, 10) })
    }
  }
  const r = d.recall
  const bundle = recallToFhirBundle(
    { id: r.id, title: r.title, noticeRef: r.notice_ref, fdaClass: r.fda_class ?? 'II', maker: r.maker, receivedOn: r.received_on ?? new Date(r.created_at).toISOString().slice(0, 10) },
    devices, { baseUrl: getRequestURL(event).origin, generatedAt: new Date().toISOString() },
  )
  await logPhiAccess(db, user, 'recall.fhir', { recallId: id }, new Set(devices.map((x) => x.patient.mrn)).size, devices.length)
  setResponseHeader(event, 'content-type', 'application/fhir+json; charset=utf-8')
  return bundle
})
