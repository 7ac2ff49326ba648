import { facilityFor } from '../../../queries/facilities'
/** GET /api/stock/locations — the facility's stock locations (core store, theatre carts). */
export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'coordinator', 'admin')
  const f = await facilityFor(useDb(), user.facilityId)
  return useDb().selectFrom('stock_locations').select(['id', 'code', 'name', 'theatre_id as theatreId', 'replenished_at as replenishedAt'])
    .where('facility_id', '=', f.id).orderBy('code').execute()
})
