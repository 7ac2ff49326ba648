/** PATCH /api/recalls/:id/stock/:rsId — an affected shelf line was pulled (or returned to the maker). */
import { RecallStockBody, RecallStockParams } from '../../../../../shared/schemas/recalls'
import { assertRecallOpen, loadRecall } from '../../../../queries/recalls'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const { id, rsId } = await paramsWith(event, RecallStockParams)
  const body = await readBodyWith(event, RecallStockBody)
  return useDb().transaction().execute(async (trx) => {
    assertRecallOpen(await loadRecall(trx, id, { forUpdate: true }))
    const r = await trx.updateTable('recall_stock').set({ status: body.status, updated_by: user.id, updated_at: new Date() })
      .where('id', '=', rsId).where('recall_id', '=', id).returning(['stock_line_id']).executeTakeFirst()
    if (!r) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such stock line in this recall.' })
    await writeAudit(trx, { actorId: user.id, action: 'recall.stock_status', entity: 'recall', entityId: id, details: { recallStockId: rsId, stockLineId: r.stock_line_id, status: body.status } }, event)
    return { ok: true }
  })
})
