import { sql } from 'kysely'
import type { Db } from '../utils/db'
import type { CatalogFacts } from '../../shared/utils/scan-checks'

const num = (v: string | null) => (v == null ? null : Number(v))

export function catalogFacts(r: { kind: string; description: string; diameter_mm: string | null; length_mm: string | null; angle_deg: string | null; side: 'left' | 'right' | null }): CatalogFacts {
  return { kind: r.kind, description: r.description, diameterMm: num(r.diameter_mm), lengthMm: num(r.length_mm), angleDeg: num(r.angle_deg), side: r.side }
}

/** The catalog item a device identifier names (GTIN for GS1, DI for HIBCC). */
export function itemByDi(db: Db, issuer: 'GS1' | 'HIBCC', di: string) {
  return db.selectFrom('catalog_items').selectAll()
    .where(issuer === 'GS1' ? 'gtin' : 'hibcc_di', '=', di)
    .executeTakeFirst()
}

/** Open recalls that name this unit: by DI, and by lot, serial or expiry range when the notice gives them. */
export function recallsFor(db: Db, unit: { di: string | null; lot: string | null; serial: string | null; expiry: string | null }) {
  if (!unit.di) return Promise.resolve([])
  return db.selectFrom('recall_items as ri')
    .innerJoin('recalls as r', 'r.id', 'ri.recall_id')
    .select(['r.id', 'r.title', 'r.notice_ref'])
    .where('r.status', '=', 'open')
    .where('ri.di', '=', unit.di)
    .where((eb) => eb.and([
      eb.or([eb('ri.lot', 'is', null), eb('ri.lot', '=', unit.lot ?? '')]),
      eb.or([eb('ri.serial', 'is', null), eb('ri.serial', '=', unit.serial ?? '')]),
      eb.or([eb('ri.expiry_from', 'is', null), ...(unit.expiry ? [eb('ri.expiry_from', '<=', unit.expiry)] : [])]),
      eb.or([eb('ri.expiry_to', 'is', null), ...(unit.expiry ? [eb('ri.expiry_to', '>=', unit.expiry)] : [])]),
    ]))
    .execute()
}

/** Every item logged for a case, oldest first, with the catalog item, who logged it and who acknowledged it. */
export function caseItemList(db: Db, caseId: number) {
  return db.selectFrom('case_items as i')
    .leftJoin('catalog_items as c', 'c.id', 'i.item_id')
    .leftJoin('makers as m', 'm.id', 'c.maker_id')
    .innerJoin('users as u', 'u.id', 'i.recorded_by')
    .leftJoin('users as a', 'a.id', 'i.acknowledged_by')
    .leftJoin('users as mu', 'mu.id', 'i.matched_by')
    .select([
      'i.id', 'i.item_id', 'i.issuer', 'i.di', 'i.lot', 'i.serial', 'i.expiry', 'i.manufactured', 'i.hri', 'i.source',
      'i.disposition', 'i.waste_reason', 'i.waste_note', 'i.checks', 'i.acknowledged_at', 'i.acknowledgement_note',
      'i.matched_at', 'i.match_reason', 'i.recorded_at', 'i.raw_scan',
      'u.name as recorded_by_name', 'a.name as acknowledged_by_name', 'mu.name as matched_by_name',
      'c.kind', 'c.description', 'c.diameter_mm', 'c.length_mm', 'c.angle_deg', 'c.side', 'c.implant_card', 'c.unit_cost',
      'm.name as maker_name', 'm.address as maker_address', 'm.website as maker_website',
    ])
    .where('i.case_id', '=', caseId)
    .orderBy('i.id')
    .execute()
}

/** The usable shelf line for this item and lot in the facility, locked for the decrement. */
export function shelfLineFor(db: Db, facilityId: number, itemId: number, lot: string | null) {
  return db.selectFrom('stock_lines as sl')
    .innerJoin('stock_locations as loc', 'loc.id', 'sl.location_id')
    .select(['sl.id', 'sl.on_hand', 'sl.quarantined', 'sl.lot'])
    .where('loc.facility_id', '=', facilityId)
    .where('sl.item_id', '=', itemId)
    .where(sql<boolean>`coalesce(sl.lot, '') = ${lot ?? ''}`)
    .orderBy(sql`sl.on_hand > 0`, 'desc')
    .orderBy('sl.id')
    // the shelf line only: FOR UPDATE over the join would also lock the location's row, and every
    // scan of the facility would then queue on it until commit
    .forUpdate(['sl'])
    .execute()
}

/** Take one pack off a shelf line and write its movement, in one statement (one round trip). */
export async function consumeOne(db: Db, stockLineId: number, m: { reason: 'implant' | 'waste'; caseItemId: number; movedBy: number }) {
  await sql`WITH line AS (
      UPDATE stock_lines SET on_hand = on_hand - 1, updated_at = now() WHERE id = ${stockLineId} RETURNING id
    )
    INSERT INTO stock_movements (stock_line_id, delta, reason, case_item_id, moved_by)
    SELECT id, -1, ${m.reason}, ${m.caseItemId}, ${m.movedBy} FROM line`.execute(db)
}
