/** POST /api/cases/:id/items/:itemId/match — match an unmatched pack to a catalog item, with the reason. */
import { ItemParams, MatchBody } from '../../../../../../shared/schemas/items'
import { assertEditable, loadCase } from '../../../../../queries/cases'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'circulator')
  const { id, itemId } = await paramsWith(event, ItemParams)
  const body = await readBodyWith(event, MatchBody)
  const db = useDb()
  return db.transaction().execute(async (trx) => {
    const c = await loadCase(trx, id, user, { forUpdate: true })
    assertEditable(c)
    const item = await trx.selectFrom('catalog_items').select(['id', 'active']).where('id', '=', body.itemId).executeTakeFirst()
    if (!item?.active) throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: 'Choose an active catalog item.', data: { fields: { itemId: 'Choose an active catalog item.' } } })
    const r = await trx.updateTable('case_items')
      .set({ item_id: body.itemId, matched_by: user.id, matched_at: new Date(), match_reason: body.reason })
      .where('id', '=', itemId).where('case_id', '=', id).where('item_id', 'is', null).returning('id').executeTakeFirst()
    if (!r) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'This item is already matched, or is not in this case.' })
    await writeAudit(trx, { actorId: user.id, action: 'item.match', entity: 'case', entityId: id, details: { caseItemId: itemId, itemId: body.itemId, reason: body.reason } }, event)
    await notifyLive(trx, { caseId: id, kind: 'item', id: itemId })
    return { ok: true }
  })
})
