/** GET /api/cases/:id/items — the case's implant log: implanted, wasted and explanted packs with totals. */
import { IdParams } from '../../../../../shared/schemas/cases'
import { loadCase } from '../../../../queries/cases'
import { caseItemList } from '../../../../queries/items'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const db = useDb()
  await loadCase(db, id, user)
  const rows = await caseItemList(db, id)
  const items = rows.map((r) => {
    const checks = (r.checks ?? []) as { code: string; message: string; source?: string; needsAck: boolean }[]
    return {
      id: r.id, itemId: r.item_id, kind: r.kind, description: r.description, maker: r.maker_name,
      diameterMm: r.diameter_mm == null ? null : Number(r.diameter_mm), lengthMm: r.length_mm == null ? null : Number(r.length_mm),
      angleDeg: r.angle_deg == null ? null : Number(r.angle_deg), side: r.side,
      issuer: r.issuer, di: r.di, lot: r.lot, serial: r.serial, expiry: r.expiry, hri: r.hri, source: r.source,
      disposition: r.disposition, wasteReason: r.waste_reason, wasteNote: r.waste_note, unitCost: Number(r.unit_cost ?? 0),
      checks, needsAck: checks.some((c) => c.needsAck) && !r.acknowledged_at,
      acknowledgedBy: r.acknowledged_by_name, acknowledgedAt: r.acknowledged_at, acknowledgementNote: r.acknowledgement_note,
      unmatched: r.item_id == null, matchedBy: r.matched_by_name, matchedAt: r.matched_at, matchReason: r.match_reason,
      recordedBy: r.recorded_by_name, recordedAt: r.recorded_at,
    }
  })
  const count = (d: string) => items.filter((i) => i.disposition === d).length
  return {
    items,
    totals: {
      implanted: count('implanted'), wasted: count('wasted'), explanted: count('explanted'),
      wasteCost: items.filter((i) => i.disposition === 'wasted').reduce((s, i) => s + i.unitCost, 0),
      toAcknowledge: items.filter((i) => i.needsAck).length,
      unmatched: items.filter((i) => i.unmatched).length,
    },
  }
})
