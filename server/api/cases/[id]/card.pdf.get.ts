/** GET /api/cases/:id/card.pdf?item=ID — the patient implant card for one implanted device (EU MDR Art. 18). */
import { IdParams } from '../../../../shared/schemas/cases'
import { CardQuery } from '../../../../shared/schemas/record'
import { buildRecord } from '../../../../shared/utils/record'
import { loadCase } from '../../../queries/cases'
import { assertRecordReader } from '../../../queries/records'
import { caseSnapshot } from '../../../queries/snapshot'
import { cardEligible, renderImplantCard } from '../../../utils/pdf/implant-card'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const q = await queryWith(event, CardQuery)
  const db = useDb()
  const c = await loadCase(db, id, user)
  await assertRecordReader(db, c, user)
  const record = buildRecord(await caseSnapshot(db, id), { version: 1, previousVersionHash: null, addendumReason: null })
  const item = record.implants.find((i) => i.id === q.item)
  if (!item) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such implant in this case.' })
  // EU MDR Art. 18(3): screws, plates, wires, pins, wedges, clips and connectors carry no implant card
  if (!cardEligible(item)) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'This device gets no implant card (screws and similar parts are exempt, EU MDR Art. 18(3)).' })
  const f = await db.selectFrom('facilities').select(['name', 'address']).where('id', '=', c.facility_id).executeTakeFirstOrThrow()
  const pdf = await renderImplantCard(record, q.item, { institution: [f.name, f.address].filter(Boolean).join(', ') })
  await writeAudit(db, { actorId: user.id, action: 'phi.read', entity: 'implant_card', entityId: id, details: { item: q.item } }, event)
  setResponseHeader(event, 'content-type', 'application/pdf')
  setResponseHeader(event, 'content-disposition', `attachment; filename="implant-card-${id}-${q.item}.pdf"`)
  return Buffer.from(pdf)
})
