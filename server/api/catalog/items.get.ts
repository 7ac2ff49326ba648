/** GET /api/catalog/items?q=&kind= — active catalog items matching a search (for matching and manual entry). */
import { z } from 'zod'
import { sql } from 'kysely'

const Query = z.object({
  q: z.string().trim().max(100).optional(),
  kind: z.enum(['nail', 'head_element', 'distal_screw', 'set_screw', 'end_cap', 'other']).optional(),
  limit: z.coerce.number().int().min(1).max(200).default(50),
})

export default defineEventHandler(async (event) => {
  await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const q = await queryWith(event, Query)
  let query = useDb().selectFrom('catalog_items')
    .select(['id', 'kind', 'description', 'reference', 'gtin', 'hibcc_di', 'diameter_mm', 'length_mm', 'angle_deg', 'side', 'nail_type'])
    .where('active', '=', true)
  if (q.kind) query = query.where('kind', '=', q.kind)
  if (q.q) {
    const like = `%${q.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`
    query = query.where((eb) => eb.or([eb('description', 'ilike', like), eb('reference', 'ilike', like), eb('gtin', 'like', like), eb('hibcc_di', 'ilike', like)]))
  }
  const rows = await query.orderBy('kind').orderBy(sql`diameter_mm NULLS FIRST`).orderBy(sql`length_mm NULLS FIRST`).orderBy('id').limit(q.limit).execute()
  return rows.map((r) => ({
    id: r.id, kind: r.kind, description: r.description, reference: r.reference, gtin: r.gtin, hibccDi: r.hibcc_di,
    diameterMm: r.diameter_mm == null ? null : Number(r.diameter_mm), lengthMm: r.length_mm == null ? null : Number(r.length_mm),
    angleDeg: r.angle_deg == null ? null : Number(r.angle_deg), side: r.side, nailType: r.nail_type,
  }))
})
