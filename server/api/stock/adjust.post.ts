/** POST /api/stock/adjust — set a line to the counted number, with the reason (audited, as a movement). */
import { AdjustBody } from '../../../shared/schemas/stock'
import { facilityFor } from '../../queries/facilities'
import { lineFor } from '../../queries/stock'
import { noteLowStock } from '../../queries/replenishment'
import { dayInZone } from '../../../shared/utils/dates'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const b = await readBodyWith(event, AdjustBody)
  const db = useDb()
  const prior = await db.selectFrom('stock_movements').select('stock_line_id').where('client_key', '=', b.clientKey).executeTakeFirst()
  if (prior) return { ok: true, replayed: true }
  const f = await facilityFor(db, user.facilityId)
  return db.transaction().execute(async (trx) => {
    const line = await lineFor(trx, b.stockLineId, f.id)
    const delta = b.count - line.on_hand
    if (delta === 0) return { ok: true, delta: 0, replayed: false }
    await trx.updateTable('stock_lines').set({ on_hand: b.count, updated_at: new Date() }).where('id', '=', line.id).execute()
    await trx.insertInto('stock_movements').values({ stock_line_id: line.id, delta, reason: 'adjust', moved_by: user.id, client_key: b.clientKey, note: [b.reason, b.note].filter(Boolean).join(': ') }).execute()
    // a count that drops the location below par tells the coordinator, as a scan would
    const lowStock = delta < 0 ? await noteLowStock(trx, line.id, dayInZone(Date.now(), f.time_zone)) : false
    await writeAudit(trx, { actorId: user.id, action: 'stock.adjust', entity: 'stock_line', entityId: line.id, details: { from: line.on_hand, to: b.count, reason: b.reason, note: b.note ?? null } }, event)
    return { ok: true, delta, replayed: false, lowStock }
  })
})
