// The safety checks a scanned pack goes through before it is logged for a case. Pure: the route gathers
// the facts (catalog item, confirmed sizes, recalls, shelf) and this decides accepted / check / refused.
export type ScanResult = 'accepted' | 'check' | 'refused'

export interface CheckFinding {
  code: string
  message: string
  source?: string
  needsAck: boolean
}

export interface ScannedUnit {
  di: string | null
  lot: string | null
  serial: string | null
  expiry: string | null
}

export interface CatalogFacts {
  kind: string
  description: string
  diameterMm: number | null
  lengthMm: number | null
  angleDeg: number | null
  side: 'left' | 'right' | null
}

export interface ScanFacts {
  unit: ScannedUnit
  /** null: the DI is not in the catalog */
  item: CatalogFacts | null
  /** facility-local date of the operation, YYYY-MM-DD */
  surgeryDay: string
  caseSide: 'left' | 'right'
  disposition: 'implanted' | 'wasted' | 'explanted'
  /** the confirmed sizes of this kind (several for distal screws) */
  confirmed: CatalogFacts[]
  /** open recalls that name this unit */
  recalls: { title: string; noticeRef: string }[]
  /** the shelf line of this lot is quarantined */
  quarantined: boolean
  /** the pack is not on the facility's stock records */
  notOnShelf: boolean
}

export interface ScanDecision {
  result: ScanResult
  /** for refused: the one reason */
  refusal: CheckFinding | null
  checks: CheckFinding[]
}

const fmt = (n: number | null) => (n == null ? '—' : String(n))

/** How a size reads: 11 × 380 mm, 130°, left. */
export function describeSize(i: CatalogFacts): string {
  if (i.kind === 'nail') return `${fmt(i.diameterMm)} × ${fmt(i.lengthMm)} mm, ${fmt(i.angleDeg)}°${i.side ? `, ${i.side}` : ''}`
  if (i.lengthMm != null) return `${fmt(i.lengthMm)} mm`
  return i.description
}

function sameSize(a: CatalogFacts, b: CatalogFacts): boolean {
  const eq = (x: number | null, y: number | null) => (x == null && y == null) || (x != null && y != null && Math.abs(x - y) < 0.001)
  return a.kind === b.kind && eq(a.diameterMm, b.diameterMm) && eq(a.lengthMm, b.lengthMm) && eq(a.angleDeg, b.angleDeg) && (a.side ?? null) === (b.side ?? null)
}

export function decideScan(f: ScanFacts): ScanDecision {
  const refuse = (code: string, message: string, source?: string): ScanDecision =>
    ({ result: 'refused', refusal: { code, message, source, needsAck: false }, checks: [] })

  // Explanted hardware is documented as it comes out; expiry and recalls do not stop that.
  if (f.disposition !== 'explanted') {
    // Instructions for use: never implant expired product. A use-by date is good through that day.
    if (f.unit.expiry && f.unit.expiry < f.surgeryDay) {
      return refuse('expired', `Expired ${f.unit.expiry} — do not open. Fetch another pack.`, "The implant's instructions for use")
    }
    if (f.recalls.length) {
      const r = f.recalls[0]!
      return refuse('recalled', `Under recall (${r.title}${r.noticeRef ? `, ${r.noticeRef}` : ''}) — do not open. Set the pack aside for the coordinator and fetch another.`, 'Recall notice')
    }
    if (f.quarantined) {
      return refuse('quarantined', 'This lot is quarantined on the shelf — do not open. Set it aside for the coordinator and fetch another.', 'Recall notice')
    }
  }

  const checks: CheckFinding[] = []
  if (!f.item) {
    checks.push({ code: 'unmatched', message: 'This device identifier is not in the catalog. It is held as unmatched until a coordinator or circulator matches it.', needsAck: false })
  } else if (f.disposition === 'implanted' && ['nail', 'head_element', 'distal_screw'].includes(f.item.kind)) {
    if (f.item.kind === 'nail' && f.item.side && f.item.side !== f.caseSide) {
      checks.push({
        code: 'wrong_side', needsAck: true,
        message: `This nail is for the ${f.item.side} side; the case is ${f.caseSide}. Stop and check before it goes in.`,
        source: 'The Joint Commission UP.01.01.01 (implants matched to the patient and side)',
      })
    }
    if (!f.confirmed.length) {
      checks.push({ code: 'no_confirmed_size', needsAck: true, message: `No ${f.item.kind === 'nail' ? 'nail' : f.item.kind === 'head_element' ? 'head element' : 'distal screw'} size is confirmed yet. Confirm the size before opening.` })
    } else if (!f.confirmed.some((c) => sameSize(c, f.item!))) {
      checks.push({
        code: 'size_differs', needsAck: true,
        message: `Size ${describeSize(f.item)} differs from the confirmed ${f.confirmed.map(describeSize).join(' or ')}. Check with the surgeon.`,
      })
    }
    if (f.item.kind === 'nail' && f.item.angleDeg != null) {
      checks.push({
        code: 'aiming_guide', needsAck: true,
        message: `Set the aiming guide to ${f.item.angleDeg}°${f.item.side ? ` and ${f.item.side}` : ''}, the same as this nail.`,
        source: 'Technique guides (aiming arm matches the nail): from memory',
      })
    }
  }
  if (f.notOnShelf && f.item) {
    checks.push({ code: 'not_on_shelf', needsAck: false, message: 'This lot is not on the shelf records; the coordinator will correct the stock.' })
  }
  const result: ScanResult = checks.some((c) => c.needsAck || c.code === 'unmatched') ? 'check' : 'accepted'
  return { result, refusal: null, checks }
}
