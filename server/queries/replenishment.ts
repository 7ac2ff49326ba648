import { sql } from 'kysely'
import { enqueueMail } from '../utils/mail'
import type { Db } from '../utils/db'

/**
 * What a location used since it was last replenished, and what to reorder to bring each item back to
 * par. Consignment stock is paid for once opened, so used = implanted + wasted.
 */
export async function replenishment(db: Db, locationId: number) {
  const loc = await db.selectFrom('stock_locations').select(['id', 'name', 'replenished_at']).where('id', '=', locationId).executeTakeFirstOrThrow()
  const since = loc.replenished_at ?? new Date(0)
  const rows = await db.selectFrom('catalog_items as ci')
    .leftJoin('par_levels as par', (j) => j.onRef('par.item_id', '=', 'ci.id').on('par.location_id', '=', locationId))
    .select([
      'ci.id', 'ci.description', 'ci.reference', 'ci.gtin', 'ci.unit_cost', 'par.par',
      sql<number>`coalesce((SELECT sum(sl.on_hand) FROM stock_lines sl WHERE sl.item_id = ci.id AND sl.location_id = ${locationId} AND NOT sl.quarantined), 0)::int`.as('on_hand'),
      sql<number>`coalesce((SELECT -sum(m.delta) FROM stock_movements m JOIN stock_lines sl ON sl.id = m.stock_line_id
        WHERE sl.item_id = ci.id AND sl.location_id = ${locationId} AND m.reason IN ('implant', 'waste') AND m.moved_at > ${since}), 0)::int`.as('used'),
      sql<number>`coalesce((SELECT -sum(m.delta) FROM stock_movements m JOIN stock_lines sl ON sl.id = m.stock_line_id
        WHERE sl.item_id = ci.id AND sl.location_id = ${locationId} AND m.reason = 'waste' AND m.moved_at > ${since}), 0)::int`.as('wasted'),
    ])
    .where((eb) => eb.or([eb('par.par', 'is not', null), eb.exists(eb.selectFrom('stock_lines as sl2').select('sl2.id').whereRef('sl2.item_id', '=', 'ci.id').where('sl2.location_id', '=', locationId))]))
    .orderBy('ci.description').execute()
  const lines = rows.map((r) => {
    const par = r.par ?? 0
    const reorder = Math.max(0, par - r.on_hand)
    return { itemId: r.id, item: r.description, reference: r.reference, gtin: r.gtin, unitCost: Number(r.unit_cost), par: r.par, onHand: r.on_hand, used: r.used, wasted: r.wasted, reorder, belowPar: r.par != null && r.on_hand < r.par }
  })
  return { location: { id: loc.id, name: loc.name, replenishedAt: loc.replenished_at }, since, lines: lines.filter((l) => l.used > 0 || l.par != null) }
}

/**
 * After a pack leaves a line: when the location now holds fewer of the item than its par, tell the
 * facility's coordinators (once a day per item and location, through the outbox).
 */
export async function noteLowStock(db: Db, stockLineId: number, day: string) {
  const r = await db.selectFrom('stock_lines as sl')
    .innerJoin('stock_locations as loc', 'loc.id', 'sl.location_id')
    .innerJoin('catalog_items as ci', 'ci.id', 'sl.item_id')
    .innerJoin('par_levels as par', (j) => j.onRef('par.item_id', '=', 'sl.item_id').onRef('par.location_id', '=', 'sl.location_id'))
    .select(['loc.id as location_id', 'loc.name as location', 'loc.facility_id', 'ci.id as item_id', 'ci.description', 'par.par',
      sql<number>`(SELECT coalesce(sum(x.on_hand), 0)::int FROM stock_lines x WHERE x.item_id = sl.item_id AND x.location_id = sl.location_id AND NOT x.quarantined)`.as('on_hand')])
    .where('sl.id', '=', stockLineId).executeTakeFirst()
  if (!r || r.on_hand >= r.par) return false
  const coordinators = await db.selectFrom('users').select('email').where('role', '=', 'coordinator').where('active', '=', true).where('facility_id', '=', r.facility_id).execute()
  for (const c of coordinators) {
    await enqueueMail(db, {
      to: c.email, kind: 'low_stock', ref: `stock:${r.location_id}:${r.item_id}`, dedupeKey: `low_stock:${r.location_id}:${r.item_id}:${day}:${c.email}`,
      subject: `Below par: ${r.description} at ${r.location} (${r.on_hand} of ${r.par})`,
      text: `${r.location} holds ${r.on_hand} of ${r.description}; its par is ${r.par}. Reorder from the replenishment report.\n\nIsthmus`,
    })
  }
  return true
}
