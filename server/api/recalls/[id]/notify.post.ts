/** POST /api/recalls/:id/notify — e-mail each affected surgeon the list of their patients (through the outbox). */
import { IdParams } from '../../../../shared/schemas/cases'
import { assertRecallOpen, loadRecall, recallDetail } from '../../../queries/recalls'
import { enqueueMail } from '../../../utils/mail'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  return useDb().transaction().execute(async (trx) => {
    const recall = await loadRecall(trx, id, { forUpdate: true })
    assertRecallOpen(recall)
    const d = await recallDetail(trx, id, user.facilityId)
    const bySurgeon = new Map<number, typeof d.patients>()
    for (const p of d.patients) bySurgeon.set(p.surgeon_id, [...(bySurgeon.get(p.surgeon_id) ?? []), p])
    let mails = 0
    for (const [surgeonId, list] of bySurgeon) {
      const lines = list.map((p) => `- ${p.family_name}, ${p.given_name} (MRN ${p.mrn}), ${p.description ?? p.di}, lot ${p.lot ?? '—'}${p.serial ? `, serial ${p.serial}` : ''}, case ${p.case_id}`)
      await enqueueMail(trx, {
        to: list[0]!.surgeon_email, kind: 'recall_notice', ref: `recall:${id}`, dedupeKey: `recall_notice:${id}:${surgeonId}:${list.length}`,
        subject: `Recall ${recall.notice_ref || recall.title}: ${list.length} of your patients`,
        text: `${list[0]!.surgeon_name},\n\nRecall "${recall.title}"${recall.notice_ref ? ` (${recall.notice_ref})` : ''}, FDA class ${recall.fda_class ?? '—'}, names implants that these patients of yours received:\n\n${lines.join('\n')}\n\nPlease review each patient and tell the recall coordinator what follow-up is planned.\n\nIsthmus`,
      })
      mails++
      await trx.updateTable('recall_patients').set({ status: 'surgeon_notified', updated_by: user.id, updated_at: new Date() })
        .where('recall_id', '=', id).where('status', '=', 'open').where('id', 'in', list.map((p) => p.id)).execute()
    }
    await writeAudit(trx, { actorId: user.id, action: 'recall.notify_surgeons', entity: 'recall', entityId: id, details: { surgeons: mails, patients: d.patients.length } }, event)
    return { surgeons: mails, patients: d.patients.length }
  })
})
