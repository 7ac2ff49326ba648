import {
  chooseDistalScrew, chooseHeadElement, chooseNail, resolveRules, SizingInputError, STANDING_CAUTION, tadFinding, tipApexDistance,
  type Finding, type SizingResult, type SizingRules, type StockLine,
} from '../../shared/utils/sizing'
import { READING_SPEC, type ReadingKind } from '../../shared/schemas/cases'
import { dayInZone } from '../../shared/utils/dates'
import type { Db } from '../utils/db'
import { caseDecisions, caseHeader, caseReadings, currentDecisions, currentReadings } from './cases'
import { facilityShelf, type ShelfItem } from './stock'

export type Component = 'nail' | 'head_element' | 'distal_screw'

export interface ComponentSizing {
  component: Component
  slot: number
  /** labels of readings still to enter before the engine can run */
  missing: string[]
  error: { field: string; message: string } | null
  ideal: ShelfItem | null
  choice: ShelfItem | null
  alternatives: ShelfItem[]
  /** every in-stock size of this kind (and, for nails, this side and type) the team may choose instead */
  options: ShelfItem[]
  warnings: Finding[]
  reasons: string[]
  decision: {
    id: number; chosenItemId: number; chosenDescription: string; proposedItemId: number | null; reason: string | null
    guideAcknowledged: boolean; decidedBy: string; decidedAt: string
  } | null
  /** the confirmed size no longer matches what the rules now propose (a reading or the shelf changed) */
  decisionStale: boolean
}

function toStockLine(i: ShelfItem): StockLine | null {
  if (i.diameterMm == null || i.lengthMm == null) return null
  if (i.kind !== 'nail' && i.kind !== 'head_element' && i.kind !== 'distal_screw') return null
  return {
    id: String(i.id), kind: i.kind, diameterMm: i.diameterMm, lengthMm: i.lengthMm,
    angleDeg: i.angleDeg ?? undefined, side: i.side, nailType: i.nailType ?? undefined, onHand: i.onHand,
  }
}

export function rulesOf(h: { nail_clearance_mm: string | null; distal_screw_rounding: 'up' | 'down' | null; tad_limit_mm: string | null }): SizingRules {
  return resolveRules({
    ...(h.nail_clearance_mm != null ? { nailClearanceMm: Number(h.nail_clearance_mm) } : {}),
    ...(h.distal_screw_rounding ? { distalScrewRounding: h.distal_screw_rounding } : {}),
    ...(h.tad_limit_mm != null ? { tadLimitMm: Number(h.tad_limit_mm) } : {}),
  })
}

/** The engine's proposal for every component of a case, on the facility's live shelf. */
export async function caseSizing(db: Db, caseId: number) {
  const h = await caseHeader(db, caseId)
  const rules = rulesOf(h)
  const day = dayInZone(Date.now(), h.time_zone)
  const [readingRows, decisionRows, shelf] = await Promise.all([
    caseReadings(db, caseId),
    caseDecisions(db, caseId),
    facilityShelf(db, h.facility_id, ['nail', 'head_element', 'distal_screw'], day),
  ])
  const current = currentReadings(readingRows)
  const decisions = currentDecisions(decisionRows)
  const value = (kind: ReadingKind, slot = 0) => {
    const r = current.get(`${kind}:${slot}`)
    return r ? Number(r.value) : undefined
  }
  const byId = new Map(shelf.map((i) => [String(i.id), i]))
  const lines = (kind: Component) => shelf.filter((i) => i.kind === kind).map(toStockLine).filter((l): l is StockLine => !!l)

  const nailType = h.procedure === 'short_nail' ? 'short' : 'long'
  const optionsFor = (component: Component) => shelf.filter((i) => i.kind === component && i.onHand > 0 &&
    (component !== 'nail' || ((i.side === null || i.side === h.side) && i.nailType === nailType)))

  function run(component: Component, slot: number, needs: ReadingKind[], engine: () => SizingResult): ComponentSizing {
    const missing = needs.filter((k) => value(k, component === 'distal_screw' ? slot : 0) === undefined).map((k) => READING_SPEC[k].label)
    const d = decisions.get(`${component}:${slot}`)
    const out: ComponentSizing = {
      component, slot, missing, error: null, ideal: null, choice: null, alternatives: [], options: optionsFor(component), warnings: [], reasons: [],
      decision: d ? {
        id: d.id, chosenItemId: d.chosen_item_id, chosenDescription: d.chosen_description, proposedItemId: d.proposed_item_id,
        reason: d.reason, guideAcknowledged: d.guide_acknowledged, decidedBy: d.decided_by_name, decidedAt: new Date(d.decided_at).toISOString(),
      } : null,
      decisionStale: false,
    }
    if (missing.length) return out
    try {
      const r = engine()
      const view = (l: StockLine | null) => (l ? byId.get(l.id) ?? null : null)
      Object.assign(out, {
        ideal: view(r.ideal), choice: view(r.choice),
        alternatives: r.alternatives.map(view).filter(Boolean), warnings: r.warnings, reasons: r.reasons,
      })
      out.decisionStale = !!d && d.proposed_item_id !== (r.ideal ? Number(r.ideal.id) : null)
    } catch (e) {
      if (e instanceof SizingInputError) out.error = { field: e.field, message: e.plain }
      else throw e
    }
    return out
  }

  const nail = run('nail', 0, ['reamed_diameter', 'nail_length', 'native_angle'], () => chooseNail({
    reamedDiameterMm: value('reamed_diameter')!, lengthMm: value('nail_length')!, nativeAngleDeg: value('native_angle')!,
    side: h.side, nailType,
  }, lines('nail'), rules))
  const headElement = run('head_element', 0, ['head_element_length'], () => chooseHeadElement({
    readingMm: value('head_element_length')!, compressionMm: value('head_compression') ?? 0,
  }, lines('head_element'), rules))
  const distalSlots = [...new Set(readingRows.filter((r) => r.kind === 'distal_depth').map((r) => r.slot))].sort()
  const distal = distalSlots.map((slot) => run('distal_screw', slot, ['distal_depth'], () => chooseDistalScrew({
    depthMm: value('distal_depth', slot)!,
  }, lines('distal_screw'), rules)))

  const tadKinds: ReadingKind[] = ['tad_ap_tip_apex', 'tad_ap_screw_diameter', 'tad_lat_tip_apex', 'tad_lat_screw_diameter', 'tad_true_screw_diameter']
  let tad: { tadMm: number; overLimit: boolean; limitMm: number; warning: Finding | null } | null = null
  let tadError: { field: string; message: string } | null = null
  if (tadKinds.every((k) => value(k) !== undefined)) {
    try {
      const t = tipApexDistance({
        apTipApexMm: value('tad_ap_tip_apex')!, apScrewDiameterMm: value('tad_ap_screw_diameter')!,
        latTipApexMm: value('tad_lat_tip_apex')!, latScrewDiameterMm: value('tad_lat_screw_diameter')!,
        trueScrewDiameterMm: value('tad_true_screw_diameter')!,
      }, rules)
      tad = { ...t, limitMm: rules.tadLimitMm, warning: tadFinding(t, rules) }
    } catch (e) {
      if (e instanceof SizingInputError) tadError = { field: e.field, message: e.plain }
      else throw e
    }
  }

  return {
    caseId, status: h.status, side: h.side, procedure: h.procedure,
    rules: { ...rules, version: h.rule_version ?? null },
    caution: STANDING_CAUTION,
    nail, headElement, distal, tad, tadError,
  }
}

export type CaseSizing = Awaited<ReturnType<typeof caseSizing>>
