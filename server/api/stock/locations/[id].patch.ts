/** PATCH /api/stock/locations/:id — rename a stock location, change its code or the theatre it serves. */
import { IdParams } from '../../../../shared/schemas/cases'
import { LocationBody } from '../../../../shared/schemas/stock'
import { facilityFor } from '../../../queries/facilities'
import { locationFor, theatreCheck } from '../../../queries/stock'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const b = await readBodyWith(event, LocationBody)
  const db = useDb()
  const f = await facilityFor(db, user.facilityId)
  const before = await locationFor(db, id, f.id)
  await theatreCheck(db, b.theatreId ?? null, f.id)
  try {
    return await db.transaction().execute(async (trx) => {
      await trx.updateTable('stock_locations').set({ code: b.code, name: b.name, theatre_id: b.theatreId ?? null }).where('id', '=', id).execute()
      await writeAudit(trx, {
        actorId: user.id, action: 'stock.location_change', entity: 'stock_location', entityId: id,
        details: { before: { code: before.code, name: before.name, theatreId: before.theatre_id }, after: b },
      }, event)
      return { id }
    })
  } catch (e) {
    mapDbError(e, 'location', { code: b.code })
  }
})
