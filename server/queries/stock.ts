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

/** The stock location, if it belongs to the person's facility. */
export async function locationFor(db: Db, locationId: number, facilityId: number) {
  const loc = await db.selectFrom('stock_locations').selectAll().where('id', '=', locationId).where('facility_id', '=', facilityId).executeTakeFirst()
  if (!loc) throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: 'Choose one of this facility’s stock locations.', data: { fields: { locationId: 'Choose one of this facility’s stock locations.' } } })
  return loc
}

/** A theatre a location serves must be one of the facility's own. */
export async function theatreCheck(db: Db, theatreId: number | null, facilityId: number) {
  if (theatreId == null) return
  const t = await db.selectFrom('theatres').select('id').where('id', '=', theatreId).where('facility_id', '=', facilityId).executeTakeFirst()
  if (!t) throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: 'Choose one of this facility’s theatres.', data: { fields: { theatreId: 'Choose one of this facility’s theatres.' } } })
}

/** A stock line of the person's facility, locked for a change. */
export async function lineFor(db: Db, stockLineId: number, facilityId: number) {
  const line = await db.selectFrom('stock_lines as sl').innerJoin('stock_locations as loc', 'loc.id', 'sl.location_id')
    .select(['sl.id', 'sl.item_id', 'sl.lot', 'sl.expiry', 'sl.on_hand', 'sl.quarantined', 'sl.location_id'])
    .where('sl.id', '=', stockLineId).where('loc.facility_id', '=', facilityId).forUpdate('sl').executeTakeFirst()
  if (!line) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such stock line.' })
  return line
}

/** Add packs to a line (item + lot at a location), making the line when it is new. */
export async function addToLine(db: Db, p: { locationId: number; itemId: number; lot: string | null; expiry: string | null; count: number }) {
  const existing = await db.selectFrom('stock_lines').select(['id', 'quarantined'])
    .where('location_id', '=', p.locationId).where('item_id', '=', p.itemId).where(sql<boolean>`coalesce(lot, '') = ${p.lot ?? ''}`).forUpdate().executeTakeFirst()
  if (existing) {
    await db.updateTable('stock_lines').set((eb) => ({ on_hand: eb('on_hand', '+', p.count), updated_at: new Date(), ...(p.expiry ? { expiry: p.expiry } : {}) })).where('id', '=', existing.id).execute()
    return { id: existing.id, created: false, quarantined: existing.quarantined }
  }
  const r = await db.insertInto('stock_lines').values({ location_id: p.locationId, item_id: p.itemId, lot: p.lot, expiry: p.expiry, on_hand: p.count }).returning('id').executeTakeFirstOrThrow()
  return { id: r.id, created: true, quarantined: false }
}
