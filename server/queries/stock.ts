import { sql } from 'kysely'
import type { Db } from '../utils/db'
import type { ItemKind } from '../../db/types'

export interface ShelfItem {
  id: number
  kind: ItemKind
  description: string
  gtin: string | null
  diameterMm: number | null
  lengthMm: number | null
  angleDeg: number | null
  side: 'left' | 'right' | null
  nailType: 'short' | 'long' | null
  /** usable packs: not quarantined, not expired on `day` */
  onHand: number
  locations: { code: string; name: string; onHand: number }[]
}

const num = (v: string | null) => (v == null ? null : Number(v))

/** Every catalog item the facility keeps on a shelf (on hand or not), with usable counts per location. */
export async function facilityShelf(db: Db, facilityId: number, kinds: ItemKind[], day: string): Promise<ShelfItem[]> {
  const rows = await db.selectFrom('stock_lines as sl')
    .innerJoin('stock_locations as loc', 'loc.id', 'sl.location_id')
    .innerJoin('catalog_items as ci', 'ci.id', 'sl.item_id')
    .select([
      'ci.id', 'ci.kind', 'ci.description', 'ci.gtin', 'ci.diameter_mm', 'ci.length_mm', 'ci.angle_deg', 'ci.side', 'ci.nail_type',
      'loc.code', 'loc.name',
      sql<number>`sum(sl.on_hand) FILTER (WHERE NOT sl.quarantined AND (sl.expiry IS NULL OR sl.expiry >= ${day}::date))::int`.as('usable'),
    ])
    .where('loc.facility_id', '=', facilityId)
    .where('ci.active', '=', true)
    .where('ci.kind', 'in', kinds)
    .groupBy(['ci.id', 'loc.code', 'loc.name'])
    .orderBy('ci.id')
    .orderBy('loc.code')
    .execute()
  const byItem = new Map<number, ShelfItem>()
  for (const r of rows) {
    let it = byItem.get(r.id)
    if (!it) {
      it = {
        id: r.id, kind: r.kind, description: r.description, gtin: r.gtin,
        diameterMm: num(r.diameter_mm), lengthMm: num(r.length_mm), angleDeg: num(r.angle_deg),
        side: r.side, nailType: r.nail_type, onHand: 0, locations: [],
      }
      byItem.set(r.id, it)
    }
    const n = Number(r.usable ?? 0)
    it.onHand += n
    if (n > 0) it.locations.push({ code: r.code, name: r.name, onHand: n })
  }
  return [...byItem.values()]
}
