/** GET /api/catalog/items?q=&kind=&includeRetired=&limit=&offset= — catalog items matching a search. */
import { sql } from 'kysely'
import { CatalogListQuery } from '../../../../shared/schemas/catalog'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const q = await queryWith(event, CatalogListQuery)
  let query = useDb().selectFrom('catalog_items as c').leftJoin('makers as m', 'm.id', 'c.maker_id')
    .select(['c.id', 'c.kind', 'c.description', 'c.reference', 'c.gtin', 'c.hibcc_di', 'c.diameter_mm', 'c.length_mm', 'c.angle_deg', 'c.side', 'c.nail_type',
      'c.material', 'c.unit_cost', 'c.implant_card', 'c.active', 'm.name as maker',
      sql<boolean>`EXISTS (SELECT 1 FROM case_items i WHERE i.item_id = c.id)`.as('used')])
  if (q.includeRetired !== 'true') query = query.where('c.active', '=', true)
  if (q.kind) query = query.where('c.kind', '=', q.kind)
  if (q.q) {
    const like = `%${q.q.replace(/[\\%_]/g, (ch) => `\\${ch}`)}%`
    query = query.where((eb) => eb.or([eb('c.description', 'ilike', like), eb('c.reference', 'ilike', like), eb('c.gtin', 'like', like), eb('c.hibcc_di', 'ilike', like)]))
  }
  const rows = await query.orderBy('c.kind').orderBy(sql`c.diameter_mm NULLS FIRST`).orderBy(sql`c.length_mm NULLS FIRST`).orderBy('c.id').limit(q.limit).offset(q.offset).execute()
  const n = (v: string | null) => (v == null ? null : Number(v))
  return rows.map((r) => ({
    id: r.id, kind: r.kind, description: r.description, reference: r.reference, gtin: r.gtin, hibccDi: r.hibcc_di,
    diameterMm: n(r.diameter_mm), lengthMm: n(r.length_mm), angleDeg: n(r.angle_deg), side: r.side, nailType: r.nail_type,
    material: r.material, unitCost: Number(r.unit_cost), implantCard: r.implant_card, active: r.active, maker: r.maker, used: r.used,
  }))
})
