/** GET /api/stock/lines?locationId=&itemId=&q=&quarantined=&expiringWithin=30|60|90 — stock lines with item, lot, expiry and count. */
import { sql } from 'kysely'
import { LinesQuery } from '../../../shared/schemas/stock'
import { dayInZone } from '../../../shared/utils/dates'
import { facilityFor } from '../../queries/facilities'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'coordinator', 'admin')
  const q = await queryWith(event, LinesQuery)
  const db = useDb()
  const f = await facilityFor(db, user.facilityId)
  const today = dayInZone(Date.now(), f.time_zone)
  let query = db.selectFrom('stock_lines as sl').innerJoin('stock_locations as loc', 'loc.id', 'sl.location_id').innerJoin('catalog_items as ci', 'ci.id', 'sl.item_id')
    .leftJoin('par_levels as par', (j) => j.onRef('par.item_id', '=', 'sl.item_id').onRef('par.location_id', '=', 'sl.location_id'))
    .select(['sl.id', 'sl.lot', 'sl.expiry', 'sl.on_hand', 'sl.quarantined', 'loc.id as location_id', 'loc.name as location', 'ci.id as item_id', 'ci.description', 'ci.gtin', 'ci.kind', 'par.par',
      sql<number | null>`(sl.expiry - ${today}::date)`.as('days_left')])
    .where('loc.facility_id', '=', f.id)
  if (q.locationId) query = query.where('loc.id', '=', q.locationId)
  if (q.itemId) query = query.where('ci.id', '=', q.itemId)
  if (q.quarantined) query = query.where('sl.quarantined', '=', q.quarantined === 'true')
  if (q.expiringWithin) query = query.where('sl.on_hand', '>', 0).where(sql<boolean>`sl.expiry <= ${today}::date + ${q.expiringWithin}::int`)
  if (q.q) {
    const like = `%${q.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`
    query = query.where((eb) => eb.or([eb('ci.description', 'ilike', like), eb('sl.lot', 'ilike', like), eb('ci.gtin', 'like', like)]))
  }
  const rows = await query.orderBy(q.expiringWithin ? 'sl.expiry' : 'ci.description').orderBy('sl.id').limit(q.limit).execute()
  return rows.map((r) => ({
    id: r.id, lot: r.lot, expiry: r.expiry, onHand: r.on_hand, quarantined: r.quarantined, locationId: r.location_id, location: r.location,
    itemId: r.item_id, item: r.description, gtin: r.gtin, kind: r.kind, par: r.par, daysLeft: r.days_left == null ? null : Number(r.days_left),
    expired: r.days_left != null && Number(r.days_left) < 0,
  }))
})
