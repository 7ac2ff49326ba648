/** PATCH /api/cases/:id/items/:itemId — change what happened to a pack (e.g. opened, then not used: wasted). */
import { ItemParams, ItemUpdateBody } from '../../../../../../shared/schemas/items'
import { assertEditable, loadCase } from '../../../../../queries/cases'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'surgeon')
  const { id, itemId } = await paramsWith(event, ItemParams)
  const body = await readBodyWith(event, ItemUpdateBody)
  const db = useDb()
  return db.transaction().execute(async (trx) => {
    const c = await loadCase(trx, id, user, { forUpdate: true })
    assertEditable(c)
    const before = await trx.selectFrom('case_items').select(['disposition', 'waste_reason', 'waste_note']).where('id', '=', itemId).where('case_id', '=', id).executeTakeFirst()
    if (!before) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such item in this case.' })
    await trx.updateTable('case_items').set({
      disposition: body.disposition, waste_reason: body.disposition === 'wasted' ? body.wasteReason ?? null : null,
      waste_note: body.disposition === 'wasted' ? body.wasteNote || null : null,
    }).where('id', '=', itemId).execute()
    await writeAudit(trx, { actorId: user.id, action: 'item.update', entity: 'case', entityId: id, details: { caseItemId: itemId, before, after: body } }, event)
    await notifyLive(trx, { caseId: id, kind: 'item', id: itemId })
    return { ok: true }
  })
})
