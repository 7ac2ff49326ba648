/** POST /api/recalls/:id/close — close the campaign once every patient is settled and every pack pulled. */
import { sql } from 'kysely'
import { IdParams } from '../../../../shared/schemas/cases'
import { assertRecallOpen, loadRecall, recallDetail } from '../../../queries/recalls'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  return useDb().transaction().execute(async (trx) => {
    assertRecallOpen(await loadRecall(trx, id, { forUpdate: true }))
    const d = await recallDetail(trx, id, null)
    if (!d.progress.closable) {
      const open = d.progress.patients - d.progress.patientsDone
      const stock = d.progress.stock - d.progress.stockDone
      throw createError({
        statusCode: 409, statusMessage: 'Conflict',
        message: [open ? `${open} ${open === 1 ? 'patient is' : 'patients are'} not closed yet.` : '', stock ? `${stock} shelf ${stock === 1 ? 'line is' : 'lines are'} not pulled yet.` : ''].filter(Boolean).join(' '),
      })
    }
    await trx.updateTable('recalls').set({ status: 'closed', closed_at: sql`now()` }).where('id', '=', id).execute()
    await writeAudit(trx, { actorId: user.id, action: 'recall.close', entity: 'recall', entityId: id }, event)
    return { status: 'closed' }
  })
})
