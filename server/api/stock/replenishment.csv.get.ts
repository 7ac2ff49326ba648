/** GET /api/stock/replenishment.csv?locationId= — the reorder as CSV, for a bill-only purchase order. */
import { ReplenishQuery } from '../../../shared/schemas/stock'
import { facilityFor } from '../../queries/facilities'
import { replenishment } from '../../queries/replenishment'
import { locationFor } from '../../queries/stock'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const q = await queryWith(event, ReplenishQuery)
  const db = useDb()
  await locationFor(db, q.locationId, (await facilityFor(db, user.facilityId)).id)
  const r = await replenishment(db, q.locationId)
  setResponseHeader(event, 'content-type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'content-disposition', `attachment; filename="reorder-${q.locationId}.csv"`)
  return toCsv(['gtin', 'reference', 'item', 'used_since_replenishment', 'wasted', 'on_hand', 'par', 'reorder_quantity', 'unit_cost', 'line_cost'],
    r.lines.map((l) => [l.gtin, l.reference, l.item, l.used, l.wasted, l.onHand, l.par ?? '', l.reorder, l.unitCost.toFixed(2), (l.reorder * l.unitCost).toFixed(2)]))
})
