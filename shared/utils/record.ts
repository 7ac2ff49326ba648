/**
 * The case record: one canonical, JSON-able object built from a snapshot of a case.
 *
 * The same record feeds the signature (its SHA-256 is what the surgeon signs), the PDF chart copy
 * and the implant cards, so it must be reproducible: the same snapshot gives a deep-equal record
 * however the database happened to order its rows. Every list is therefore sorted by stable keys,
 * every instant is normalised to ISO 8601 UTC, and local dates/times are derived with
 * Intl.DateTimeFormat in the facility's own time zone (no libraries, no host time zone).
 *
 * Pure TypeScript with explicit imports: runs in the browser (preview before signing) and on the
 * server (the copy that is signed and stored).
 */
import { STANDING_CAUTION } from './sizing'
import { hibcCheckChar } from './udi'
import { partsInZone } from './dates'

// ---------------------------------------------------------------------------------------------
// Input: a snapshot of the case as read from the database
// ---------------------------------------------------------------------------------------------

export interface SnapshotPerson { id: number; name: string }
export interface SnapshotFinding { code: string; message: string; source?: string; acknowledgedBy?: string | null; acknowledgedAt?: string | null }
export interface CaseSnapshot {
  facility: { name: string; timeZone: string }
  case: { id: number; procedure: 'short_nail' | 'long_nail'; side: 'left' | 'right'; theatre: string;
          scheduledAt: string; openedAt: string | null; closedAt: string | null }   // ISO instants (UTC)
  patient: { mrn: string; familyName: string; givenName: string; birthDate: string /* YYYY-MM-DD */; sex: 'female'|'male'|'other'|'unknown' }
  team: { surgeon: SnapshotPerson; circulator: SnapshotPerson | null; scrub: SnapshotPerson | null }
  ruleProfile: { version: number; nailClearanceMm: number; distalScrewRounding: 'up' | 'down'; tadLimitMm: number } | null
  readings: { id: number; kind: string; slot: number; value: string; unit: 'mm' | 'deg'; enteredBy: string; enteredAt: string; supersedesId: number | null }[]  // ALL rows incl. superseded
  decisions: { component: 'nail' | 'head_element' | 'distal_screw'; slot: number; proposed: { itemId: number; description: string } | null;
               chosen: { itemId: number; description: string }; reason: string | null; reasons: string[]; warnings: SnapshotFinding[];
               guideAcknowledged: boolean; decidedBy: string; decidedAt: string }[]   // current decisions only
  tad: { tadMm: number; overLimit: boolean; limitMm: number } | null
  items: { id: number; description: string; kind: string; maker: { name: string; address: string; website: string } | null;
           issuer: 'GS1' | 'HIBCC' | null; di: string | null; lot: string | null; serial: string | null; expiry: string | null; manufactured: string | null;
           hri: string | null /* human-readable UDI, e.g. (01)09521234500018(17)281231(10)FH2601A */;
           source: 'camera' | 'wedge' | 'photo' | 'manual'; disposition: 'implanted' | 'wasted' | 'explanted';
           wasteReason: string | null; wasteNote: string | null; recordedBy: string; recordedAt: string;
           checks: SnapshotFinding[]; implantCard: boolean }[]
  warnings: SnapshotFinding[]   // case-level warnings and their acknowledgements
}

type SnapshotItem = CaseSnapshot['items'][number]
type SnapshotReading = CaseSnapshot['readings'][number]
type SnapshotDecision = CaseSnapshot['decisions'][number]

// ---------------------------------------------------------------------------------------------
// Output: the canonical record
// ---------------------------------------------------------------------------------------------

export const RECORD_SCHEMA = 'isthmus.record/1' as const

/** The standing caution printed on every record (common practice; manufacturers' instructions for use). */
export const RECORD_CAUTION: string = STANDING_CAUTION

/** An instant: the UTC ISO string plus the calendar day and 24-hour time in the facility's zone. */
export interface RecordTime { iso: string; date: string; time: string }

export interface RecordPerson { id: number; name: string }

export interface RecordAcknowledgement { by: string; at: RecordTime }

export interface RecordFinding {
  code: string
  message: string
  source: string | null
  /** null while nobody has acknowledged it */
  acknowledged: RecordAcknowledgement | null
}

export interface RecordReadingEntry {
  id: number
  /** the value exactly as stored (numeric as text) */
  value: string
  /** value with its unit for print: "11.5 mm", "130°" */
  display: string
  unit: 'mm' | 'deg'
  enteredBy: string
  enteredAt: RecordTime
  supersedesId: number | null
  /** who replaced this value, for earlier (corrected) values; null for the current value */
  correctedBy: string | null
  correctedAt: RecordTime | null
}

export interface RecordReading {
  kind: string
  label: string
  slot: number
  current: RecordReadingEntry
  /** earlier values of the same reading, oldest first */
  corrections: RecordReadingEntry[]
}

export interface RecordDecision {
  component: 'nail' | 'head_element' | 'distal_screw'
  slot: number
  /** "Nail", "Head element", "Distal screw 2" */
  label: string
  proposed: { itemId: number; description: string } | null
  chosen: { itemId: number; description: string }
  /** true: chosen = proposed; false: the team chose another size; null: nothing was proposed */
  matchesProposal: boolean | null
  /** why the chosen size differs from the proposed one */
  reason: string | null
  reasons: string[]
  warnings: RecordFinding[]
  guideAcknowledged: boolean
  decidedBy: string
  decidedAt: RecordTime
}

export interface RecordUdiSymbol {
  /** bwip-js symbology */
  bcid: 'gs1datamatrix' | 'hibcdatamatrix'
  /** data as bwip-js takes it: GS1 HRI with parentheses; HIBC without the leading + and check */
  text: string
}

export interface RecordItem {
  id: number
  description: string
  kind: string
  kindLabel: string
  /** false while the item is not matched to a catalog entry */
  matched: boolean
  maker: { name: string; address: string; website: string } | null
  issuer: 'GS1' | 'HIBCC' | null
  di: string | null
  lot: string | null
  serial: string | null
  expiry: string | null
  manufactured: string | null
  hri: string | null
  /** what the chart copy prints as a 2D symbol so the UDI can be scanned again */
  udiSymbol: RecordUdiSymbol | null
  source: 'camera' | 'wedge' | 'photo' | 'manual'
  disposition: string
  wasteReason: string | null
  wasteReasonLabel: string | null
  wasteNote: string | null
  recordedBy: string
  recordedAt: RecordTime
  checks: RecordFinding[]
  implantCard: boolean
}

export interface RecordWarning extends RecordFinding {
  scope: 'case' | 'sizing' | 'item'
  /** what it is about, in words: "Case", "Distal screw 2", "Head element (lot FH2603C)" */
  subject: string
  itemId: number | null
}

export interface CaseRecord {
  schema: typeof RECORD_SCHEMA
  version: number
  previousVersionHash: string | null
  addendumReason: string | null
  facility: { name: string; timeZone: string }
  caseId: number
  patient: {
    mrn: string
    familyName: string
    givenName: string
    /** "Family, Given" */
    name: string
    birthDate: string
    sex: 'female' | 'male' | 'other' | 'unknown'
    sexLabel: string
  }
  procedure: { code: 'short_nail' | 'long_nail'; label: string }
  side: 'left' | 'right'
  theatre: string
  /** the day of the operation in the facility's zone (opened, else scheduled) */
  date: string
  times: { scheduled: RecordTime; opened: RecordTime | null; closed: RecordTime | null }
  team: { surgeon: RecordPerson; circulator: RecordPerson | null; scrub: RecordPerson | null }
  readings: RecordReading[]
  sizing: {
    ruleProfile: { version: number; nailClearanceMm: number; distalScrewRounding: 'up' | 'down'; tadLimitMm: number } | null
    decisions: RecordDecision[]
  }
  /** implanted and explanted devices, by time recorded */
  implants: RecordItem[]
  /** opened, not implanted */
  waste: RecordItem[]
  /** items whose disposition is not one of the three (should be empty before closing) */
  pending: RecordItem[]
  tipApex: { tadMm: number; limitMm: number; overLimit: boolean } | null
  /** every warning and check of the case, with its acknowledgement */
  warnings: RecordWarning[]
  caution: string
}

export interface RecordMeta { version: number; previousVersionHash: string | null; addendumReason: string | null }

// ---------------------------------------------------------------------------------------------
// Words
// ---------------------------------------------------------------------------------------------

export const PROCEDURE_WORDS: Record<'short_nail' | 'long_nail', string> = {
  short_nail: 'Short cephalomedullary nail',
  long_nail: 'Long cephalomedullary nail',
}

export const SEX_WORDS: Record<'female' | 'male' | 'other' | 'unknown', string> = {
  female: 'Female', male: 'Male', other: 'Other', unknown: 'Unknown',
}

/** Readings in the order the operation produces them (shared/schemas/cases.ts READING_SPEC). */
const READING_ORDER: readonly [string, string][] = [
  ['reamed_diameter', 'Last reamer'],
  ['nail_length', 'Nail length'],
  ['native_angle', 'Neck-shaft angle'],
  ['head_element_length', 'Head element reading'],
  ['head_compression', 'Planned compression'],
  ['distal_depth', 'Distal screw depth'],
  ['tad_ap_tip_apex', 'AP tip–apex'],
  ['tad_ap_screw_diameter', 'AP head-element width'],
  ['tad_lat_tip_apex', 'Lateral tip–apex'],
  ['tad_lat_screw_diameter', 'Lateral head-element width'],
  ['tad_true_screw_diameter', 'True head-element diameter'],
]
const READING_RANK = new Map(READING_ORDER.map(([k], i) => [k, i]))
const READING_LABEL = new Map(READING_ORDER)

const COMPONENT_ORDER = ['nail', 'head_element', 'distal_screw'] as const
const COMPONENT_WORDS: Record<string, string> = { nail: 'nail', head_element: 'head element', distal_screw: 'distal screw' }

export const ITEM_KIND_WORDS: Record<string, string> = {
  nail: 'nail',
  head_element: 'head element',
  distal_screw: 'distal screw',
  set_screw: 'set screw',
  end_cap: 'end cap',
  other: 'other implant',
  unmatched: 'unmatched item',
}

export const WASTE_REASON_WORDS: Record<string, string> = {
  dropped: 'Dropped',
  contaminated: 'Contaminated',
  wrong_size: 'Wrong size opened',
  damaged_package: 'Damaged package',
  plan_changed: 'Plan changed',
  expired: 'Expired',
  other: 'Other',
}

const DISPOSITIONS = new Set(['implanted', 'wasted', 'explanted'])

const words = (code: string): string => code.replace(/_/g, ' ')
const capital = (s: string): string => (s ? s.charAt(0).toUpperCase() + s.slice(1) : s)

// ---------------------------------------------------------------------------------------------
// Time in the facility's zone
// ---------------------------------------------------------------------------------------------

function toMs(instant: string, what: string): number {
  const ms = Date.parse(instant)
  if (typeof instant !== 'string' || Number.isNaN(ms)) throw new RangeError(`${what}: not an ISO instant: ${String(instant)}`)
  return ms
}

/** An instant as UTC ISO plus 'YYYY-MM-DD' (21 CFR 801.18 style) and 'HH:MM' in `timeZone`. */
export function recordTime(instant: string, timeZone: string, what = 'time'): RecordTime {
  const d = new Date(toMs(instant, what))
  const p = partsInZone(d, timeZone)
  return { iso: d.toISOString(), date: `${p.year}-${p.month}-${p.day}`, time: `${p.hour}:${p.minute}` }
}

// ---------------------------------------------------------------------------------------------
// Stable ordering
// ---------------------------------------------------------------------------------------------

/** Plain code-unit comparison: locale-independent, so every machine sorts alike. */
function cmp(a: string | number | null | undefined, b: string | number | null | undefined): number {
  if (a === b) return 0
  if (a === null || a === undefined) return -1
  if (b === null || b === undefined) return 1
  if (typeof a === 'number' && typeof b === 'number') return a - b
  const sa = String(a)
  const sb = String(b)
  return sa < sb ? -1 : sa > sb ? 1 : 0
}

function by<T>(...keys: ((x: T) => string | number | null | undefined)[]): (a: T, b: T) => number {
  return (a, b) => {
    for (const k of keys) {
      const c = cmp(k(a), k(b))
      if (c !== 0) return c
    }
    return 0
  }
}

// ---------------------------------------------------------------------------------------------
// Pieces
// ---------------------------------------------------------------------------------------------

function finding(f: SnapshotFinding, tz: string): RecordFinding {
  const by = (f.acknowledgedBy ?? '').trim()
  const at = f.acknowledgedAt ?? null
  return {
    code: f.code,
    message: f.message,
    source: f.source ?? null,
    // An acknowledgement needs both a person and a time; half of one is not an acknowledgement.
    acknowledged: by && at ? { by, at: recordTime(at, tz, 'acknowledgedAt') } : null,
  }
}

const findingOrder = by<RecordFinding>(
  (f) => f.code, (f) => f.message, (f) => f.source, (f) => f.acknowledged?.at.iso, (f) => f.acknowledged?.by,
)

function findings(list: SnapshotFinding[] | null | undefined, tz: string): RecordFinding[] {
  return (list ?? []).map((f) => finding(f, tz)).sort(findingOrder)
}

/** "11.50" → "11.5", "130.00" → "130": how a gauge reading is spoken. */
function trimDecimal(value: string): string {
  const v = String(value).trim()
  if (!/^-?\d+(\.\d+)?$/.test(v)) return v
  return v.includes('.') ? v.replace(/0+$/, '').replace(/\.$/, '') : v
}

export function readingDisplay(value: string, unit: 'mm' | 'deg'): string {
  const v = trimDecimal(value)
  return unit === 'deg' ? `${v}°` : `${v} mm`
}

function buildReadings(rows: SnapshotReading[], tz: string): RecordReading[] {
  const chrono = by<SnapshotReading>((r) => toMs(r.enteredAt, 'enteredAt'), (r) => r.id)
  const supersededBy = new Map<number, SnapshotReading>()
  for (const r of [...rows].sort(chrono)) {
    // Two corrections of one value should not happen; if they do, the earlier one counts.
    if (r.supersedesId !== null && r.supersedesId !== undefined && !supersededBy.has(r.supersedesId)) {
      supersededBy.set(r.supersedesId, r)
    }
  }
  const groups = new Map<string, SnapshotReading[]>()
  for (const r of rows) {
    const key = `${r.kind}\u0000${r.slot}`
    const g = groups.get(key)
    if (g) g.push(r)
    else groups.set(key, [r])
  }
  const out: RecordReading[] = []
  for (const g of groups.values()) {
    const sorted = [...g].sort(chrono)
    const live = sorted.filter((r) => !supersededBy.has(r.id))
    // The latest value nobody replaced is current; with a broken chain, simply the latest.
    const current = (live.length ? live : sorted)[(live.length ? live : sorted).length - 1]!
    const entry = (r: SnapshotReading): RecordReadingEntry => {
      const next = r.id === current.id ? undefined : supersededBy.get(r.id)
      return {
        id: r.id,
        value: r.value,
        display: readingDisplay(r.value, r.unit),
        unit: r.unit,
        enteredBy: r.enteredBy,
        enteredAt: recordTime(r.enteredAt, tz, 'enteredAt'),
        supersedesId: r.supersedesId ?? null,
        correctedBy: next ? next.enteredBy : null,
        correctedAt: next ? recordTime(next.enteredAt, tz, 'enteredAt') : null,
      }
    }
    out.push({
      kind: current.kind,
      label: READING_LABEL.get(current.kind) ?? capital(words(current.kind)),
      slot: current.slot,
      current: entry(current),
      corrections: sorted.filter((r) => r.id !== current.id).map(entry),
    })
  }
  return out.sort(by<RecordReading>((r) => READING_RANK.get(r.kind) ?? READING_ORDER.length, (r) => r.kind, (r) => r.slot))
}

function decisionLabel(component: string, slot: number): string {
  const w = capital(COMPONENT_WORDS[component] ?? words(component))
  return component === 'distal_screw' && slot > 0 ? `${w} ${slot}` : w
}

function buildDecision(d: SnapshotDecision, tz: string): RecordDecision {
  return {
    component: d.component,
    slot: d.slot,
    label: decisionLabel(d.component, d.slot),
    proposed: d.proposed ? { itemId: d.proposed.itemId, description: d.proposed.description } : null,
    chosen: { itemId: d.chosen.itemId, description: d.chosen.description },
    matchesProposal: d.proposed ? d.proposed.itemId === d.chosen.itemId : null,
    reason: d.reason && d.reason.trim() ? d.reason.trim() : null,
    // Reasons are independent sentences; sorted so a reordered JSON array cannot change the hash.
    reasons: [...(d.reasons ?? [])].sort(cmp),
    warnings: findings(d.warnings, tz),
    guideAcknowledged: d.guideAcknowledged === true,
    decidedBy: d.decidedBy,
    decidedAt: recordTime(d.decidedAt, tz, 'decidedAt'),
  }
}

/**
 * What a 2D symbol on the chart copy encodes. GS1: the HRI itself (bwip-js reads the
 * parentheses as AI boundaries). HIBC: bwip-js adds the leading '+' and the mod-43 check
 * character itself (standards.md Part B), so both are taken off the stored HRI.
 */
export function udiSymbol(item: { issuer: 'GS1' | 'HIBCC' | null; hri: string | null }): RecordUdiSymbol | null {
  const hri = (item.hri ?? '').trim()
  if (!hri || !item.issuer) return null
  if (item.issuer === 'GS1') return hri.startsWith('(') ? { bcid: 'gs1datamatrix', text: hri } : null
  let sym = hri.startsWith('*') && hri.endsWith('*') && hri.length > 2 ? hri.slice(1, -1) : hri
  if (sym.endsWith('_')) sym = sym.slice(0, -1) + ' ' // Code 39 HRI prints a space check as '_'
  if (!sym.startsWith('+') || sym.length < 3) return null
  const data = sym.slice(0, -1)
  // Only strip a last character that really is the check character.
  const body = hibcCheckChar(data) === sym.slice(-1) ? data : sym
  return { bcid: 'hibcdatamatrix', text: body.slice(1) }
}

function isMatched(item: SnapshotItem): boolean {
  return item.description.trim() !== '' && item.kind !== 'unmatched'
}

function buildItem(i: SnapshotItem, tz: string): RecordItem {
  const wasteReason = i.wasteReason && i.wasteReason.trim() ? i.wasteReason.trim() : null
  return {
    id: i.id,
    description: i.description,
    kind: i.kind,
    kindLabel: capital(ITEM_KIND_WORDS[i.kind] ?? words(i.kind)),
    matched: isMatched(i),
    maker: i.maker ? { name: i.maker.name, address: i.maker.address, website: i.maker.website } : null,
    issuer: i.issuer ?? null,
    di: i.di ?? null,
    lot: i.lot ?? null,
    serial: i.serial ?? null,
    expiry: i.expiry ?? null,
    manufactured: i.manufactured ?? null,
    hri: i.hri ?? null,
    udiSymbol: udiSymbol(i),
    source: i.source,
    disposition: i.disposition,
    wasteReason,
    wasteReasonLabel: wasteReason ? (WASTE_REASON_WORDS[wasteReason] ?? capital(words(wasteReason))) : null,
    wasteNote: i.wasteNote && i.wasteNote.trim() ? i.wasteNote.trim() : null,
    recordedBy: i.recordedBy,
    recordedAt: recordTime(i.recordedAt, tz, 'recordedAt'),
    checks: findings(i.checks, tz),
    implantCard: i.implantCard === true,
  }
}

/**
 * How an item is named in words: "distal screw (lot FH2611C)". Two items of one kind and lot
 * (two packs from one box) also get their record number, so a sentence never fits two packs.
 */
function itemSubjects(items: RecordItem[]): Map<number, string> {
  const base = new Map<number, string>()
  const count = new Map<string, number>()
  for (const i of items) {
    const b = `${ITEM_KIND_WORDS[i.kind] ?? words(i.kind)} (${itemRef(i)}`
    base.set(i.id, b)
    count.set(b, (count.get(b) ?? 0) + 1)
  }
  const out = new Map<number, string>()
  for (const i of items) {
    const b = base.get(i.id)!
    out.set(i.id, (count.get(b) ?? 0) > 1 ? `${b}, item ${i.id})` : `${b})`)
  }
  return out
}

/** The identifier a nurse would look for on the pack. */
function itemRef(i: { id: number; lot: string | null; serial: string | null; di: string | null }): string {
  if (i.lot) return `lot ${i.lot}`
  if (i.serial) return `serial ${i.serial}`
  if (i.di) return `DI ${i.di}`
  return `item ${i.id}`
}

const HEX64 = /^[0-9a-f]{64}$/

function checkMeta(meta: RecordMeta): void {
  if (!Number.isInteger(meta.version) || meta.version < 1) throw new RangeError('record version must be a whole number from 1')
  if (meta.previousVersionHash !== null && !HEX64.test(meta.previousVersionHash)) {
    throw new RangeError('previousVersionHash must be 64 lower-case hex digits (SHA-256)')
  }
  // An addendum chains to the version it amends and says why (DESIGN.md: signed → addendum).
  if (meta.version > 1 && (meta.previousVersionHash === null || !meta.addendumReason?.trim())) {
    throw new RangeError('an addendum (version 2 or later) needs the previous version hash and a reason')
  }
  if (meta.version === 1 && meta.previousVersionHash !== null) throw new RangeError('version 1 has no previous version')
}

// ---------------------------------------------------------------------------------------------
// buildRecord
// ---------------------------------------------------------------------------------------------

export function buildRecord(s: CaseSnapshot, meta: RecordMeta): CaseRecord {
  checkMeta(meta)
  const tz = s.facility.timeZone
  partsInZone(0, tz) // throws RangeError early for an unknown zone

  const scheduled = recordTime(s.case.scheduledAt, tz, 'scheduledAt')
  const opened = s.case.openedAt ? recordTime(s.case.openedAt, tz, 'openedAt') : null
  const closed = s.case.closedAt ? recordTime(s.case.closedAt, tz, 'closedAt') : null

  const items = s.items.map((i) => buildItem(i, tz)).sort(by<RecordItem>((i) => i.recordedAt.iso, (i) => i.id))
  const implants = items.filter((i) => i.disposition === 'implanted' || i.disposition === 'explanted')
  const waste = items.filter((i) => i.disposition === 'wasted')
  const pending = items.filter((i) => !DISPOSITIONS.has(i.disposition))

  const decisions = s.decisions
    .map((d) => buildDecision(d, tz))
    .sort(by<RecordDecision>(
      (d) => COMPONENT_ORDER.indexOf(d.component), (d) => d.slot, (d) => d.decidedAt.iso, (d) => d.chosen.itemId,
    ))

  const subjects = itemSubjects(items)
  const warnings: RecordWarning[] = [
    ...findings(s.warnings, tz).map((f) => ({ ...f, scope: 'case' as const, subject: 'Case', itemId: null })),
    ...decisions.flatMap((d) => d.warnings.map((f) => ({ ...f, scope: 'sizing' as const, subject: d.label, itemId: null }))),
    ...[...implants, ...waste, ...pending].flatMap((i) =>
      i.checks.map((f) => ({ ...f, scope: 'item' as const, subject: capital(subjects.get(i.id) ?? i.kindLabel), itemId: i.id }))),
  ]

  const p = s.patient
  return {
    schema: RECORD_SCHEMA,
    version: meta.version,
    previousVersionHash: meta.previousVersionHash,
    addendumReason: meta.addendumReason?.trim() ? meta.addendumReason.trim() : null,
    facility: { name: s.facility.name, timeZone: tz },
    caseId: s.case.id,
    patient: {
      mrn: p.mrn,
      familyName: p.familyName,
      givenName: p.givenName,
      name: `${p.familyName}, ${p.givenName}`,
      birthDate: p.birthDate,
      sex: p.sex,
      sexLabel: SEX_WORDS[p.sex] ?? capital(p.sex),
    },
    procedure: { code: s.case.procedure, label: PROCEDURE_WORDS[s.case.procedure] ?? capital(words(s.case.procedure)) },
    side: s.case.side,
    theatre: s.case.theatre,
    date: (opened ?? scheduled).date,
    times: { scheduled, opened, closed },
    team: {
      surgeon: { id: s.team.surgeon.id, name: s.team.surgeon.name },
      circulator: s.team.circulator ? { id: s.team.circulator.id, name: s.team.circulator.name } : null,
      scrub: s.team.scrub ? { id: s.team.scrub.id, name: s.team.scrub.name } : null,
    },
    readings: buildReadings(s.readings, tz),
    sizing: {
      ruleProfile: s.ruleProfile
        ? {
            version: s.ruleProfile.version,
            nailClearanceMm: s.ruleProfile.nailClearanceMm,
            distalScrewRounding: s.ruleProfile.distalScrewRounding,
            tadLimitMm: s.ruleProfile.tadLimitMm,
          }
        : null,
      decisions,
    },
    implants,
    waste,
    pending,
    tipApex: s.tad ? { tadMm: s.tad.tadMm, limitMm: s.tad.limitMm, overLimit: s.tad.overLimit } : null,
    warnings,
    caution: RECORD_CAUTION,
  }
}

// ---------------------------------------------------------------------------------------------
// What blocks closing the case
// ---------------------------------------------------------------------------------------------

/** "Size differs from the confirmed size." → "size differs from the confirmed size" (for use inside a sentence). */
function inSentence(message: string): string {
  let m = message.trim().replace(/\.+$/, '')
  // Lower-case only an ordinary capitalised word, not an abbreviation such as "UDI" or "TAD".
  if (/^[A-Z](?=[a-z]|\s)/.test(m) && !/^I\s/.test(m)) m = m.charAt(0).toLowerCase() + m.slice(1)
  return m
}

/**
 * Plain-words list of what stops the case from being closed, in record order; empty when it may close.
 * Rules: at least one implant implanted; every item has a disposition and is matched to the catalog;
 * wasted items say why (and 'other' says what); a size other than the proposed one has a reason;
 * the nail's aiming guide is confirmed (trade.md §3.2); every check and caution is acknowledged.
 */
export function closeProblems(s: CaseSnapshot): string[] {
  const r = buildRecord(s, { version: 1, previousVersionHash: null, addendumReason: null })
  const problems: string[] = []
  const all = [...r.implants, ...r.waste, ...r.pending].sort(by<RecordItem>((i) => i.recordedAt.iso, (i) => i.id))
  const subjects = itemSubjects(all)

  if (!r.implants.some((i) => i.disposition === 'implanted')) problems.push('No implant is recorded as implanted.')

  for (const i of all) {
    const ref = itemRef(i)
    if (!i.matched) problems.push(`An implant from ${ref} is not matched to the catalog.`)
    if (!DISPOSITIONS.has(i.disposition)) {
      problems.push(`The ${subjects.get(i.id)} has no disposition: mark it implanted, wasted or explanted.`)
    }
    if (i.disposition === 'wasted') {
      if (!i.wasteReason) problems.push(`The wasted ${subjects.get(i.id)} has no waste reason.`)
      else if (i.wasteReason === 'other' && !i.wasteNote) {
        problems.push(`The wasted ${subjects.get(i.id)} has the reason "other" but no note saying what happened.`)
      }
    }
  }

  for (const d of r.sizing.decisions) {
    const name = d.label.toLowerCase()
    if (d.matchesProposal === false && !d.reason) {
      problems.push(`The ${name} differs from the proposed size and has no reason.`)
    }
    if (d.component === 'nail' && !d.guideAcknowledged) {
      problems.push('The aiming guide is not confirmed against the nail (angle, side and length).')
    }
  }

  for (const w of r.warnings) {
    if (w.acknowledged) continue
    const msg = inSentence(w.message)
    if (w.scope === 'case') problems.push(`The case caution is not acknowledged: ${msg}.`)
    else if (w.scope === 'sizing') problems.push(`The sizing caution for the ${w.subject.toLowerCase()} is not acknowledged: ${msg}.`)
    else {
      const subj = w.itemId !== null ? subjects.get(w.itemId) : undefined
      problems.push(`The check on ${subj ?? w.subject} is not acknowledged: ${msg}.`)
    }
  }
  return problems
}

// ---------------------------------------------------------------------------------------------
// Canonical JSON and hashing
// ---------------------------------------------------------------------------------------------

/**
 * JSON with object keys sorted (code-unit order) at every depth and no whitespace; arrays keep
 * their order. Same rules as JSON.stringify otherwise: undefined/function members are left out,
 * non-finite numbers become null, toJSON() is honoured (Dates become ISO strings).
 */
export function canonicalJson(value: unknown): string {
  const out = write(value)
  return out === undefined ? 'null' : out
}

function write(v: unknown): string | undefined {
  if (v !== null && typeof v === 'object' && typeof (v as { toJSON?: unknown }).toJSON === 'function') {
    v = (v as { toJSON: () => unknown }).toJSON()
  }
  if (v === null) return 'null'
  switch (typeof v) {
    case 'string':
      return JSON.stringify(v)
    case 'number':
      return Number.isFinite(v) ? JSON.stringify(v) : 'null'
    case 'boolean':
      return v ? 'true' : 'false'
    case 'bigint':
      throw new TypeError('canonicalJson: BigInt has no JSON form')
    case 'undefined':
    case 'function':
    case 'symbol':
      return undefined
  }
  if (Array.isArray(v)) return `[${v.map((x) => write(x) ?? 'null').join(',')}]`
  const obj = v as Record<string, unknown>
  const parts: string[] = []
  for (const k of Object.keys(obj).sort()) {
    const s = write(obj[k])
    if (s !== undefined) parts.push(`${JSON.stringify(k)}:${s}`)
  }
  return `{${parts.join(',')}}`
}

/** SHA-256 of the UTF-8 bytes of `text`, as 64 lower-case hex digits (Web Crypto: Node 20 and browsers). */
export async function sha256Hex(text: string): Promise<string> {
  const subtle = globalThis.crypto?.subtle
  if (!subtle) throw new Error('Web Crypto (crypto.subtle) is not available here')
  const digest = await subtle.digest('SHA-256', new TextEncoder().encode(text))
  return Array.from(new Uint8Array(digest), (b) => b.toString(16).padStart(2, '0')).join('')
}

/** The hash a signature attests to. */
export async function recordHash(record: CaseRecord): Promise<string> {
  return sha256Hex(canonicalJson(record))
}
