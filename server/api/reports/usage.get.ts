/**
 * GET /api/reports/usage?months=12 — implants used by size, waste by reason and its cost per month, and
 * usage per surgeon, for the facility (charts, each also shown as a table).
 */
import { sql } from 'kysely'
import { UsageQuery } from '../../../shared/schemas/stock'
import { facilityFor } from '../../queries/facilities'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin', 'surgeon', 'circulator')
  const q = await queryWith(event, UsageQuery)
  const db = useDb()
  const f = await facilityFor(db, user.facilityId)
  const since = sql<Date>`date_trunc('month', now() AT TIME ZONE ${f.time_zone}) - make_interval(months => ${q.months - 1})`
  const base = db.selectFrom('case_items as i').innerJoin('cases as c', 'c.id', 'i.case_id').leftJoin('catalog_items as ci', 'ci.id', 'i.item_id')
    .where('c.facility_id', '=', f.id).where(sql<boolean>`(i.recorded_at AT TIME ZONE ${f.time_zone}) >= ${since}`)
  const [bySize, waste, bySurgeon] = await Promise.all([
    base.select(['ci.kind', 'ci.diameter_mm', 'ci.length_mm', sql<number>`count(*)::int`.as('n')])
      .where('i.disposition', '=', 'implanted').where('ci.kind', 'in', ['nail', 'head_element', 'distal_screw'])
      .groupBy(['ci.kind', 'ci.diameter_mm', 'ci.length_mm']).orderBy('ci.kind').orderBy('ci.diameter_mm').orderBy('ci.length_mm').execute(),
    base.select([sql<string>`to_char(i.recorded_at AT TIME ZONE ${f.time_zone}, 'YYYY-MM')`.as('month'), 'i.waste_reason',
      sql<number>`count(*)::int`.as('n'), sql<string>`coalesce(sum(ci.unit_cost), 0)::text`.as('cost')])
      .where('i.disposition', '=', 'wasted').groupBy(['month', 'i.waste_reason']).orderBy('month').execute(),
    base.innerJoin('users as s', 's.id', 'c.surgeon_id')
      .select(['s.name', sql<number>`count(*) FILTER (WHERE i.disposition = 'implanted')::int`.as('implanted'), sql<number>`count(*) FILTER (WHERE i.disposition = 'wasted')::int`.as('wasted'), sql<number>`count(DISTINCT c.id)::int`.as('cases')])
      .groupBy('s.name').orderBy('s.name').execute(),
  ])
  const label = (r: { kind: string | null; diameter_mm: string | null; length_mm: string | null }) =>
    r.kind === 'nail' ? `Nail ${Number(r.diameter_mm)} × ${Number(r.length_mm)} mm` : `${r.kind === 'head_element' ? 'Head element' : 'Distal screw'} ${Number(r.length_mm)} mm`
  return {
    months: q.months,
    bySize: bySize.map((r) => ({ label: label(r), kind: r.kind, count: r.n })),
    wasteByMonth: waste.map((r) => ({ month: r.month, reason: r.waste_reason, count: r.n, cost: Number(r.cost) })),
    bySurgeon: bySurgeon.map((r) => ({ surgeon: r.name, cases: r.cases, implanted: r.implanted, wasted: r.wasted })),
  }
})
