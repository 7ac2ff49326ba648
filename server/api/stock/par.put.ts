/** PUT /api/stock/par — the par level of an item at a location (0 removes the expectation). */
import { ParBody } from '../../../shared/schemas/stock'
import { facilityFor } from '../../queries/facilities'
import { locationFor } from '../../queries/stock'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const b = await readBodyWith(event, ParBody)
  const db = useDb()
  const f = await facilityFor(db, user.facilityId)
  await locationFor(db, b.locationId, f.id)
  return db.transaction().execute(async (trx) => {
    await trx.insertInto('par_levels').values({ location_id: b.locationId, item_id: b.itemId, par: b.par, updated_by: user.id })
      .onConflict((oc) => oc.columns(['location_id', 'item_id']).doUpdateSet({ par: b.par, updated_by: user.id, updated_at: new Date() })).execute()
    await writeAudit(trx, { actorId: user.id, action: 'stock.par', entity: 'par_level', entityId: `${b.locationId}:${b.itemId}`, details: b }, event)
    return { ok: true }
  })
})
