/** POST /api/cases/:id/items/:itemId/acknowledge — confirm a pack's checks were seen (size differs, side, aiming guide). */
import { AcknowledgeBody, ItemParams } from '../../../../../../shared/schemas/items'
import { assertEditable, loadCase } from '../../../../../queries/cases'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'surgeon', 'scrub')
  const { id, itemId } = await paramsWith(event, ItemParams)
  const body = await readBodyWith(event, AcknowledgeBody)
  const db = useDb()
  return db.transaction().execute(async (trx) => {
    const c = await loadCase(trx, id, user, { forUpdate: true })
    assertEditable(c)
    const r = await trx.updateTable('case_items')
      .set({ acknowledged_by: user.id, acknowledged_at: new Date(), acknowledgement_note: body.note || null })
      .where('id', '=', itemId).where('case_id', '=', id).returning(['id', 'checks']).executeTakeFirst()
    if (!r) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such item in this case.' })
    await writeAudit(trx, { actorId: user.id, action: 'item.acknowledge', entity: 'case', entityId: id, details: { caseItemId: itemId, checks: (r.checks as { code: string }[]).map((x) => x.code), note: body.note ?? null } }, event)
    await notifyLive(trx, { caseId: id, kind: 'item', id: itemId })
    return { ok: true }
  })
})
