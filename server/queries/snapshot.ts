import type { CaseSnapshot, SnapshotFinding } from '../../shared/utils/record'
import type { Db } from '../utils/db'
import { caseDecisions, caseHeader, caseReadings, currentDecisions } from './cases'
import { caseItemList } from './items'
import { caseSizing } from './sizing'

const iso = (d: Date | string | null) => (d == null ? null : new Date(d).toISOString())

/** Everything the record needs about a case, read in one place (the input of buildRecord). */
export async function caseSnapshot(db: Db, caseId: number): Promise<CaseSnapshot> {
  const [h, readings, decisionRows, items, sizing] = await Promise.all([
    caseHeader(db, caseId), caseReadings(db, caseId), caseDecisions(db, caseId), caseItemList(db, caseId), caseSizing(db, caseId),
  ])
  const chosen = new Map<number, string>()
  const ids = [...new Set(decisionRows.flatMap((d) => [d.proposed_item_id, d.chosen_item_id]).filter((x): x is number => x != null))]
  if (ids.length) {
    for (const r of await db.selectFrom('catalog_items').select(['id', 'description']).where('id', 'in', ids).execute()) chosen.set(r.id, r.description)
  }
  const decisions = [...currentDecisions(decisionRows).values()].map((d) => {
    const engine = d.engine as { reasons?: string[]; warnings?: { code: string; message: string; source?: string }[] }
    return {
      component: d.component, slot: d.slot,
      proposed: d.proposed_item_id ? { itemId: d.proposed_item_id, description: chosen.get(d.proposed_item_id) ?? '' } : null,
      chosen: { itemId: d.chosen_item_id, description: d.chosen_description },
      reason: d.reason, reasons: engine.reasons ?? [],
      // confirming a size with its cautions on screen is the acknowledgement of those cautions
      warnings: (engine.warnings ?? []).map((w) => ({ ...w, acknowledgedBy: d.decided_by_name, acknowledgedAt: iso(d.decided_at) })),
      guideAcknowledged: d.guide_acknowledged, decidedBy: d.decided_by_name, decidedAt: iso(d.decided_at)!,
    }
  })
  return {
    facility: { name: h.facility_name, timeZone: h.time_zone },
    case: {
      id: h.id, procedure: h.procedure, side: h.side, theatre: h.theatre_name,
      scheduledAt: iso(h.scheduled_at)!, openedAt: iso(h.opened_at), closedAt: iso(h.closed_at),
    },
    patient: { mrn: h.mrn, familyName: h.family_name, givenName: h.given_name, birthDate: h.birth_date, sex: h.sex },
    team: {
      surgeon: { id: h.surgeon_id, name: h.surgeon_name },
      circulator: h.circulator_id ? { id: h.circulator_id, name: h.circulator_name! } : null,
      scrub: h.scrub_id ? { id: h.scrub_id, name: h.scrub_name! } : null,
    },
    ruleProfile: h.rule_version != null ? {
      version: h.rule_version, nailClearanceMm: Number(h.nail_clearance_mm), distalScrewRounding: h.distal_screw_rounding!, tadLimitMm: Number(h.tad_limit_mm),
    } : null,
    readings: readings.map((r) => ({
      id: r.id, kind: r.kind, slot: r.slot, value: r.value, unit: r.unit, enteredBy: r.entered_by_name, enteredAt: iso(r.entered_at)!, supersedesId: r.supersedes_id,
    })),
    decisions,
    tad: sizing.tad ? { tadMm: sizing.tad.tadMm, overLimit: sizing.tad.overLimit, limitMm: sizing.tad.limitMm } : null,
    items: items.map((i) => {
      const checks = ((i.checks ?? []) as { code: string; message: string; source?: string; needsAck: boolean }[]).map((c): SnapshotFinding => {
        // information-only notes need no one's confirmation; an unmatched item is settled by its match
        if (c.code === 'unmatched') return { ...c, acknowledgedBy: i.matched_by_name, acknowledgedAt: iso(i.matched_at) }
        if (!c.needsAck) return { code: c.code, message: c.message, source: c.source, acknowledgedBy: i.recorded_by_name, acknowledgedAt: iso(i.recorded_at) }
        return { code: c.code, message: c.message, source: c.source, acknowledgedBy: i.acknowledged_by_name, acknowledgedAt: iso(i.acknowledged_at) }
      })
      return {
        id: i.id, description: i.description ?? '', kind: i.kind ?? 'unmatched',
        maker: i.maker_name ? { name: i.maker_name, address: i.maker_address ?? '', website: i.maker_website ?? '' } : null,
        issuer: i.issuer, di: i.di, lot: i.lot, serial: i.serial, expiry: i.expiry, manufactured: i.manufactured, hri: i.hri,
        source: i.source, disposition: i.disposition, wasteReason: i.waste_reason, wasteNote: i.waste_note,
        recordedBy: i.recorded_by_name, recordedAt: iso(i.recorded_at)!, checks, implantCard: !!i.implant_card,
      }
    }),
    // the tip-apex distance and its flag travel in `tad`; case-level cautions have no other source yet
    warnings: [],
  }
}
