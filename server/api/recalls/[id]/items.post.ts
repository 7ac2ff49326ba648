/** POST /api/recalls/:id/items — add affected items typed from the notice, then match patients and shelf stock. */
import { IdParams } from '../../../../shared/schemas/cases'
import { RecallItemsBody } from '../../../../shared/schemas/recalls'
import { assertRecallOpen, loadRecall, matchRecall } from '../../../queries/recalls'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const body = await readBodyWith(event, RecallItemsBody)
  return useDb().transaction().execute(async (trx) => {
    assertRecallOpen(await loadRecall(trx, id, { forUpdate: true }))
    await trx.insertInto('recall_items').values(body.items.map((i) => ({
      recall_id: id, di: i.gtin ? i.gtin.padStart(14, '0') : i.hibccDi!.toUpperCase(), lot: i.lot ?? null, serial: i.serial ?? null,
      expiry_from: i.expiryFrom ?? null, expiry_to: i.expiryTo ?? null, note: i.note || null,
    }))).execute()
    const m = await matchRecall(trx, id)
    await writeAudit(trx, { actorId: user.id, action: 'recall.items_add', entity: 'recall', entityId: id, details: { rows: body.items.length, ...m } }, event)
    setResponseStatus(event, 201)
    return { added: body.items.length, ...m }
  })
})
