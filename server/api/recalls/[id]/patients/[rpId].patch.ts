/** PATCH /api/recalls/:id/patients/:rpId — follow-up status of one affected patient, with a note; audited. */
import { RecallPatientBody, RecallPatientParams } from '../../../../../shared/schemas/recalls'
import { assertRecallOpen, loadRecall } from '../../../../queries/recalls'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const { id, rpId } = await paramsWith(event, RecallPatientParams)
  const body = await readBodyWith(event, RecallPatientBody)
  return useDb().transaction().execute(async (trx) => {
    assertRecallOpen(await loadRecall(trx, id, { forUpdate: true }))
    const before = await trx.selectFrom('recall_patients').select(['status', 'note']).where('id', '=', rpId).where('recall_id', '=', id).executeTakeFirst()
    if (!before) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such patient in this recall.' })
    await trx.updateTable('recall_patients').set({ status: body.status, note: body.note ?? before.note, updated_by: user.id, updated_at: new Date() }).where('id', '=', rpId).execute()
    await writeAudit(trx, { actorId: user.id, action: 'recall.patient_status', entity: 'recall', entityId: id, details: { recallPatientId: rpId, from: before.status, to: body.status, note: body.note ?? null } }, event)
    return { ok: true }
  })
})
