/** POST /api/stock/transfer — move packs of one line to another location (e.g. core store → theatre cart). */
import { TransferBody } from '../../../shared/schemas/stock'
import { facilityFor } from '../../queries/facilities'
import { addToLine, lineFor, locationFor } from '../../queries/stock'
import { noteLowStock } from '../../queries/replenishment'
import { dayInZone } from '../../../shared/utils/dates'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin', 'circulator')
  const b = await readBodyWith(event, TransferBody)
  const db = useDb()
  const prior = await db.selectFrom('stock_movements').select('stock_line_id').where('client_key', '=', b.clientKey).executeTakeFirst()
  if (prior) return { ok: true, replayed: true }
  const f = await facilityFor(db, user.facilityId)
  return db.transaction().execute(async (trx) => {
    const from = await lineFor(trx, b.stockLineId, f.id)
    await locationFor(trx, b.toLocationId, f.id)
    if (from.location_id === b.toLocationId) throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: 'The packs are already there.', data: { fields: { toLocationId: 'Choose another location.' } } })
    if (from.quarantined) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'This lot is quarantined. It stays where it is until the recall is settled.' })
    if (from.on_hand < b.count) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `Only ${from.on_hand} on this line.`, data: { fields: { count: `At most ${from.on_hand}.` } } })
    await trx.updateTable('stock_lines').set((eb) => ({ on_hand: eb('on_hand', '-', b.count), updated_at: new Date() })).where('id', '=', from.id).execute()
    const to = await addToLine(trx, { locationId: b.toLocationId, itemId: from.item_id, lot: from.lot, expiry: from.expiry, count: b.count })
    await trx.insertInto('stock_movements').values([
      { stock_line_id: from.id, delta: -b.count, reason: 'transfer', moved_by: user.id, client_key: b.clientKey, note: `to line ${to.id}` },
      { stock_line_id: to.id, delta: b.count, reason: 'transfer', moved_by: user.id, note: `from line ${from.id}` },
    ]).execute()
    // the location the packs left may now be below par
    const lowStock = await noteLowStock(trx, from.id, dayInZone(Date.now(), f.time_zone))
    await writeAudit(trx, { actorId: user.id, action: 'stock.transfer', entity: 'stock_line', entityId: from.id, details: { to: to.id, count: b.count } }, event)
    return { ok: true, toStockLineId: to.id, replayed: false, lowStock }
  })
})
