/** GET /api/cases/:id — one case: patient, team, status, and every reading with its corrections. */
import { IdParams } from '../../../../shared/schemas/cases'
import { caseHeader, caseReadings, currentReadings, loadCase } from '../../../queries/cases'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const db = useDb()
  await loadCase(db, id, user)
  const [h, readings] = await Promise.all([caseHeader(db, id), caseReadings(db, id)])
  const current = currentReadings(readings)
  const currentIds = new Set([...current.values()].map((r) => r.id))
  await writeAudit(db, { actorId: user.id, action: 'phi.read', entity: 'case', entityId: id }, event)
  return {
    id: h.id,
    status: h.status,
    procedure: h.procedure,
    side: h.side,
    scheduledAt: h.scheduled_at,
    openedAt: h.opened_at,
    closedAt: h.closed_at,
    facility: { id: h.facility_id, name: h.facility_name, timeZone: h.time_zone },
    theatre: { id: h.theatre_id, name: h.theatre_name },
    patient: { id: h.patient_id, mrn: h.mrn, familyName: h.family_name, givenName: h.given_name, birthDate: h.birth_date, sex: h.sex },
    team: {
      surgeon: { id: h.surgeon_id, name: h.surgeon_name },
      circulator: h.circulator_id ? { id: h.circulator_id, name: h.circulator_name } : null,
      scrub: h.scrub_id ? { id: h.scrub_id, name: h.scrub_name } : null,
    },
    ruleProfile: h.rule_version ? { version: h.rule_version } : null,
    readings: readings.map((r) => ({
      id: r.id, kind: r.kind, slot: r.slot, value: Number(r.value), unit: r.unit, note: r.note,
      supersedesId: r.supersedes_id, enteredBy: r.entered_by_name, enteredAt: r.entered_at, current: currentIds.has(r.id),
    })),
  }
})
