/** POST /api/stock/locations — add a stock location (a store room, a theatre's cart) to the facility. */
import { LocationBody } from '../../../../shared/schemas/stock'
import { facilityFor } from '../../../queries/facilities'
import { theatreCheck } from '../../../queries/stock'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const b = await readBodyWith(event, LocationBody)
  const db = useDb()
  const f = await facilityFor(db, user.facilityId)
  await theatreCheck(db, b.theatreId ?? null, f.id)
  try {
    return await db.transaction().execute(async (trx) => {
      const row = await trx.insertInto('stock_locations').values({ facility_id: f.id, code: b.code, name: b.name, theatre_id: b.theatreId ?? null })
        .returning('id').executeTakeFirstOrThrow()
      await writeAudit(trx, { actorId: user.id, action: 'stock.location_add', entity: 'stock_location', entityId: row.id, details: b }, event)
      setResponseStatus(event, 201)
      return { id: row.id }
    })
  } catch (e) {
    mapDbError(e, 'location', { code: b.code })
  }
})
