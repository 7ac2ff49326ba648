/**
 * GET /api/stock/shelf — the nail shelf by size: for each family (type, angle, side) a diameter × length
 * grid of usable packs on hand (not quarantined, not expired), so gaps are seen at a glance.
 */
import { sql } from 'kysely'
import { dayInZone } from '../../../shared/utils/dates'
import { facilityFor } from '../../queries/facilities'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'coordinator', 'admin', 'surgeon')
  const db = useDb()
  const f = await facilityFor(db, user.facilityId)
  const today = dayInZone(Date.now(), f.time_zone)
  const rows = await db.selectFrom('catalog_items as ci')
    .leftJoin('stock_lines as sl', 'sl.item_id', 'ci.id')
    .leftJoin('stock_locations as loc', (j) => j.onRef('loc.id', '=', 'sl.location_id').on('loc.facility_id', '=', f.id))
    .select(['ci.id', 'ci.nail_type', 'ci.angle_deg', 'ci.side', 'ci.diameter_mm', 'ci.length_mm',
      sql<number>`coalesce(sum(sl.on_hand) FILTER (WHERE loc.id IS NOT NULL AND NOT sl.quarantined AND (sl.expiry IS NULL OR sl.expiry >= ${today}::date)), 0)::int`.as('on_hand'),
      sql<number>`coalesce(sum(sl.on_hand) FILTER (WHERE loc.id IS NOT NULL AND (sl.quarantined OR sl.expiry < ${today}::date)), 0)::int`.as('held'),
      sql<boolean>`bool_or(loc.id IS NOT NULL)`.as('kept')])
    .where('ci.kind', '=', 'nail').where('ci.active', '=', true)
    .groupBy('ci.id').execute()
  const kept = rows.filter((r) => r.kept)
  const families = new Map<string, { key: string; nailType: string; angleDeg: number; side: string | null; diameters: Set<number>; lengths: Set<number>; cells: Record<string, { itemId: number; onHand: number; held: number }> }>()
  for (const r of kept) {
    const key = `${r.nail_type}|${r.angle_deg}|${r.side ?? ''}`
    let fam = families.get(key)
    if (!fam) { fam = { key, nailType: r.nail_type!, angleDeg: Number(r.angle_deg), side: r.side, diameters: new Set(), lengths: new Set(), cells: {} }; families.set(key, fam) }
    const d = Number(r.diameter_mm), l = Number(r.length_mm)
    fam.diameters.add(d)
    fam.lengths.add(l)
    fam.cells[`${d}x${l}`] = { itemId: r.id, onHand: r.on_hand, held: r.held }
  }
  return [...families.values()]
    .sort((a, b) => a.nailType.localeCompare(b.nailType) || a.angleDeg - b.angleDeg || (a.side ?? '').localeCompare(b.side ?? ''))
    .map((fam) => ({
      key: fam.key, nailType: fam.nailType, angleDeg: fam.angleDeg, side: fam.side,
      diameters: [...fam.diameters].sort((a, b) => a - b), lengths: [...fam.lengths].sort((a, b) => a - b), cells: fam.cells,
      empty: Object.values(fam.cells).filter((c) => c.onHand === 0).length,
    }))
})
