/** POST /api/stock/replenished — the location was restocked: its "used since" window starts now. */
import { sql } from 'kysely'
import { ReplenishedBody } from '../../../shared/schemas/stock'
import { facilityFor } from '../../queries/facilities'
import { locationFor } from '../../queries/stock'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const b = await readBodyWith(event, ReplenishedBody)
  const db = useDb()
  await locationFor(db, b.locationId, (await facilityFor(db, user.facilityId)).id)
  await db.transaction().execute(async (trx) => {
    await trx.updateTable('stock_locations').set({ replenished_at: sql`now()` }).where('id', '=', b.locationId).execute()
    await writeAudit(trx, { actorId: user.id, action: 'stock.replenished', entity: 'stock_location', entityId: b.locationId }, event)
  })
  return { ok: true }
})
