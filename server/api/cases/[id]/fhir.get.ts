/** GET /api/cases/:id/fhir — the case as an HL7 FHIR R4 Bundle: Patient, Procedure with focalDevice, a Device per implant. */
import { IdParams } from '../../../../shared/schemas/cases'
import { caseToFhirBundle } from '../../../../shared/utils/fhir'
import { loadCase } from '../../../queries/cases'
import { assertRecordReader } from '../../../queries/records'
import { caseSnapshot } from '../../../queries/snapshot'
import { logPhiAccess } from '../../../queries/trace'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const db = useDb()
  const c = await loadCase(db, id, user)
  await assertRecordReader(db, c, user)
  const bundle = caseToFhirBundle(await caseSnapshot(db, id), { baseUrl: getRequestURL(event).origin })
  await logPhiAccess(db, user, 'case.fhir', { caseId: id }, 1, 1)
  setResponseHeader(event, 'content-type', 'application/fhir+json; charset=utf-8')
  return bundle
})
