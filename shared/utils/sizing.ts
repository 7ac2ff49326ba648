/**
 * Sizing engine: turns intra-operative readings into the stocked implant size to offer.
 *
 * Pure and deterministic: no I/O, no globals changed, explicit imports only, so the same
 * code runs in the browser, on the server and in tests. All arithmetic goes through
 * Decimal because readings such as 16.4 − 1.4 must compare as exactly 15 against stock
 * sizes; binary floating point gives 14.999999999999998 and would skip a 15 mm nail.
 *
 * Decision support only: every result carries plain-language reasons and warnings with
 * their source; the surgeon decides.
 */
import Decimal from 'decimal.js'

// Private Decimal constructor: generous precision and half-up rounding without touching
// the library-wide configuration other modules may rely on.
const D = Decimal.clone({ precision: 40, rounding: Decimal.ROUND_HALF_UP })
type Dec = Decimal

// ---------------------------------------------------------------------------------------
// Public types
// ---------------------------------------------------------------------------------------

export type Side = 'left' | 'right'
export type NailType = 'short' | 'long'
export type StockKind = 'nail' | 'head_element' | 'distal_screw'

export interface StockLine {
  id: string
  kind: StockKind
  diameterMm: number
  lengthMm: number
  angleDeg?: number
  /** null or absent = unsided */
  side?: Side | null
  nailType?: NailType
  onHand: number
}

export interface SizingRules {
  /** Allowance between the last reamer and the nail, mm (0.5–1.5). */
  nailClearanceMm: number
  /** 'up': shortest screw at or above the depth reading; 'down': longest at or below it. */
  distalScrewRounding: 'up' | 'down'
  /** Tip-apex distance above this is flagged, mm. */
  tadLimitMm: number
}

export interface Finding {
  code: string
  message: string
  source?: string
}

export interface SizingResult {
  ideal: StockLine | null
  choice: StockLine | null
  alternatives: StockLine[]
  warnings: Finding[]
  reasons: string[]
}

export interface NailQuery {
  reamedDiameterMm: number
  lengthMm: number
  nativeAngleDeg: number
  side: Side
  nailType?: NailType
}

export interface HeadElementQuery {
  readingMm: number
  compressionMm?: number
}

export interface DistalScrewQuery {
  depthMm: number
}

export interface TipApexMeasurement {
  apTipApexMm: number
  apScrewDiameterMm: number
  latTipApexMm: number
  latScrewDiameterMm: number
  trueScrewDiameterMm: number
}

export interface TipApexResult {
  tadMm: number
  overLimit: boolean
}

// ---------------------------------------------------------------------------------------
// Constants
// ---------------------------------------------------------------------------------------

// Clearance 1.0 mm: AO Surgery Reference advises reaming 1–2 half-mm steps above the nail;
// a fixed 1.0 mm default is common practice. TAD 25 mm: Baumgaertner 1995.
export const DEFAULT_RULES: SizingRules = Object.freeze({
  nailClearanceMm: 1.0,
  distalScrewRounding: 'up',
  tadLimitMm: 25,
}) as SizingRules

// Common practice; manufacturers' instructions for use.
export const STANDING_CAUTION =
  'Decision support only. The surgeon decides. Follow the implant\'s instructions for use and local policy.'

/** Where each rule comes from, quoted into Finding.source. */
export const SOURCES = Object.freeze({
  parry: 'Parry JA et al., J Orthop Trauma 2018;32:174–7',
  reaming:
    'AO Foundation, AO Surgery Reference, femoral nailing (ream 1–2 steps above the nail); 1.0 mm default clearance: common practice',
  nailLength:
    'AO Surgery Reference, femoral nailing (length over the guide wire); stocked length at or below the reading: common practice',
  sided:
    'Schmutz B et al., J Orthop Surg Res 2016;11:53 (long nails are made left/right); short nails usually unsided: from memory',
  shortNailWideCanal: 'Mahmoud AN et al., J Clin Med 2025;14(11):3961',
  headElement:
    'Wheeless\' Textbook of Orthopaedics, "Hip Frx: Screw Length"; never round up: common practice',
  distalUp: 'AO Surgery Reference (screw tip passes the far cortex by about 1–2 mm)',
  distalDown: 'AO Surgery Reference, tibial locking plate ("rounded down to the nearest screw length")',
  tad: 'Baumgaertner MR et al., J Bone Joint Surg Am 1995;77(7):1058–64',
  implantsPresent: 'The Joint Commission UP.01.01.01 (implants available before the procedure)',
  commonPractice: 'common practice',
})

// ---------------------------------------------------------------------------------------
// Errors and validation
// ---------------------------------------------------------------------------------------

export class SizingInputError extends Error {
  readonly field: string
  /** The message without the field key, for a form that shows it beside the field. */
  readonly plain: string
  constructor(field: string, message: string) {
    // The key in the message lets a caller outside a form see which input to fix.
    super(`${message} (${field})`)
    this.name = 'SizingInputError'
    this.field = field
    this.plain = message
    Object.setPrototypeOf(this, new.target.prototype)
  }
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v)
}

function isFinitePositive(v: unknown): v is number {
  return typeof v === 'number' && Number.isFinite(v) && v > 0
}

function requirePositive(obj: Record<string, unknown>, field: string, message: string): Dec {
  const v = obj[field]
  if (!isFinitePositive(v)) throw new SizingInputError(field, message)
  return new D(v)
}

function requireQuery(q: unknown): Record<string, unknown> {
  if (!isRecord(q)) throw new SizingInputError('query', 'The measurements are missing')
  return q
}

function requireSide(v: unknown): Side {
  if (v !== 'left' && v !== 'right') throw new SizingInputError('side', 'Side must be left or right')
  return v
}

function optionalNailType(v: unknown): NailType | undefined {
  if (v === undefined) return undefined
  if (v !== 'short' && v !== 'long') throw new SizingInputError('nailType', 'Nail type must be short or long')
  return v
}

/** Fills in defaults and checks the facility's rules; throws SizingInputError naming the rule. */
export function resolveRules(partial?: Partial<SizingRules> | null): SizingRules {
  if (partial === undefined || partial === null) return { ...DEFAULT_RULES }
  if (!isRecord(partial)) throw new SizingInputError('rules', 'Sizing rules must be a set of named settings')
  const p = partial as Record<string, unknown>
  const rules: SizingRules = { ...DEFAULT_RULES }

  if (p.nailClearanceMm !== undefined) {
    const c = p.nailClearanceMm
    // 0.5–1.5 mm: one to three half-mm reamer steps (AO Surgery Reference; common practice).
    if (typeof c !== 'number' || !Number.isFinite(c) || new D(c).lt(0.5) || new D(c).gt(1.5)) {
      throw new SizingInputError('nailClearanceMm', 'Nail clearance must be a number from 0.5 to 1.5 mm')
    }
    rules.nailClearanceMm = c
  }
  if (p.distalScrewRounding !== undefined) {
    const r = p.distalScrewRounding
    if (r !== 'up' && r !== 'down') {
      throw new SizingInputError('distalScrewRounding', 'Distal screw rounding must be up or down')
    }
    rules.distalScrewRounding = r
  }
  if (p.tadLimitMm !== undefined) {
    if (!isFinitePositive(p.tadLimitMm)) {
      throw new SizingInputError('tadLimitMm', 'Tip-apex distance limit must be a positive number in mm')
    }
    rules.tadLimitMm = p.tadLimitMm
  }
  return rules
}

const KINDS: readonly string[] = ['nail', 'head_element', 'distal_screw']

/**
 * Checks every stock line before any choice is made: a bad count or size in the list
 * would otherwise silently change which implant is offered.
 */
function validateStock(stock: unknown): StockLine[] {
  if (!Array.isArray(stock)) throw new SizingInputError('stock', 'Stock must be a list of stock lines')
  const seen = new Set<string>()
  stock.forEach((line: unknown, i: number) => {
    const where = `Stock line ${i + 1}`
    if (!isRecord(line)) throw new SizingInputError('stock', `${where} is not a stock line`)
    const id = line.id
    if (typeof id !== 'string' || id.trim() === '') {
      throw new SizingInputError('stock', `${where} has no id`)
    }
    const named = `Stock line ${i + 1} (${id})`
    // Ids must be unique: ties are broken by id, so duplicates would make the result depend on order.
    if (seen.has(id)) throw new SizingInputError('stock', `${named} repeats an id already in the list`)
    seen.add(id)
    if (typeof line.kind !== 'string' || !KINDS.includes(line.kind)) {
      throw new SizingInputError('stock', `${named} must be a nail, head element or distal screw`)
    }
    if (!isFinitePositive(line.diameterMm)) {
      throw new SizingInputError('stock', `${named} must have a diameter that is a positive number in mm`)
    }
    if (!isFinitePositive(line.lengthMm)) {
      throw new SizingInputError('stock', `${named} must have a length that is a positive number in mm`)
    }
    const onHand = line.onHand
    if (typeof onHand !== 'number' || !Number.isInteger(onHand) || onHand < 0) {
      throw new SizingInputError('stock', `${named} must have an on-hand count that is a whole number, 0 or more`)
    }
    if (line.angleDeg !== undefined && !isFinitePositive(line.angleDeg)) {
      throw new SizingInputError('stock', `${named} must have an angle that is a positive number in degrees`)
    }
    if (line.side !== undefined && line.side !== null && line.side !== 'left' && line.side !== 'right') {
      throw new SizingInputError('stock', `${named} must be left, right or unsided`)
    }
    if (line.nailType !== undefined && line.nailType !== 'short' && line.nailType !== 'long') {
      throw new SizingInputError('stock', `${named} must be a short or long nail type`)
    }
    if (line.kind === 'nail' && line.angleDeg === undefined) {
      // A nail without an angle cannot be matched to the patient's neck-shaft angle.
      throw new SizingInputError('stock', `${named} is a nail without an angle`)
    }
  })
  return stock as StockLine[]
}

// ---------------------------------------------------------------------------------------
// Small helpers
// ---------------------------------------------------------------------------------------

const dec = (n: number): Dec => new D(n)

/** Plain number for sentences: 10, 10.5, 380. */
function fmt(n: number | Dec): string {
  return (typeof n === 'number' ? new D(n) : n).toString()
}

/** Clearance always shows one decimal ("1.0 mm") so it reads as a measured allowance. */
function fmtClearance(n: number): string {
  const d = new D(n)
  return d.decimalPlaces() === 0 ? d.toFixed(1) : d.toString()
}

/** A stock line as people say it: "11 × 380 mm, 130°" for a nail, "95 mm" for a screw. */
export function describeLine(l: StockLine): string {
  if (l.kind === 'nail') {
    return `${fmt(l.diameterMm)} × ${fmt(l.lengthMm)} mm${l.angleDeg !== undefined ? `, ${fmt(l.angleDeg)}°` : ''}${l.side ? `, ${l.side}` : ''}`
  }
  return `${fmt(l.lengthMm)} mm`
}

function byId(a: StockLine, b: StockLine): number {
  // Code-unit comparison, not locale: results must not change with the browser's language.
  return a.id < b.id ? -1 : a.id > b.id ? 1 : 0
}

function distinctSorted(values: number[]): Dec[] {
  const out: Dec[] = []
  for (const v of values) {
    const d = dec(v)
    if (!out.some((o) => o.eq(d))) out.push(d)
  }
  return out.sort((a, b) => a.cmp(b))
}

function absDiff(a: number, b: number): Dec {
  return dec(a).minus(dec(b)).abs()
}

/** Nearest-first comparator over a list of keys, then id for a stable order. */
function nearest(keys: Array<(l: StockLine) => Dec>) {
  return (a: StockLine, b: StockLine): number => {
    for (const k of keys) {
      const c = k(a).cmp(k(b))
      if (c !== 0) return c
    }
    return byId(a, b)
  }
}

function pickAlternatives(
  ideal: StockLine | null,
  fitting: StockLine[],
  keys: Array<(l: StockLine) => Dec>,
): StockLine[] {
  // Without an ideal there is nothing to be "near"; offering random sizes would mislead.
  if (!ideal) return []
  return fitting
    .filter((l) => l.onHand > 0 && l.id !== ideal.id)
    .sort(nearest(keys))
    .slice(0, 3)
}

function finish(
  ideal: StockLine | null,
  alternatives: StockLine[],
  warnings: Finding[],
  reasons: string[],
  what: string,
): SizingResult {
  let choice: StockLine | null = null
  if (ideal) {
    if (ideal.onHand > 0) {
      choice = ideal
    } else {
      warnings.push({
        code: 'out_of_stock',
        message:
          `The best-fitting ${what} (${describeLine(ideal)}) is not on hand. ` +
          (alternatives.length > 0
            ? 'Pick one of the alternatives on hand or get this size before the case.'
            : 'No other fitting size is on hand: get this size before the case.'),
        source: SOURCES.implantsPresent,
      })
    }
  }
  return { ideal, choice, alternatives, warnings, reasons }
}

// ---------------------------------------------------------------------------------------
// Nail
// ---------------------------------------------------------------------------------------

/**
 * Chooses the nail.
 *
 * How the three dimensions interact:
 *  1. Eligible lines: kind 'nail', on the patient's side or unsided, of the requested type.
 *  2. Hard limits first: keep only lines with diameter ≤ reamed − clearance AND length ≤ the
 *     reading. Filtering before choosing the angle means a stocked angle that only exists in
 *     sizes that do not fit can never leave the surgeon with no nail while one that fits exists.
 *  3. Nail type, when not asked for: the type of the longest fitting line. The length reading
 *     tells whether this is a short- or a long-nail case; without this step a short nail that
 *     comes half a millimetre wider, or in a better angle, could be offered for a 380 mm reading.
 *  4. Angle among the fitting lines of that type: the smallest not below the native angle, else
 *     the largest (warned). Angle goes before diameter and length because a nail below the
 *     native angle gave fewer good reductions (Parry 2018), while a slightly thinner or shorter
 *     nail of the same type is a minor compromise.
 *  5. Diameter: the largest among those lines with that angle.
 *  6. Length: the longest among those lines with that angle and diameter. If the longest
 *     fitting length at that angle exists only in a thinner nail, a warning says so, so the
 *     team can weigh a thinner, longer nail.
 *  7. Remaining ties (same size from a sided and an unsided line): the sided line, then id.
 *  Alternatives come from all fitting lines (any angle; any type unless one was asked for).
 */
export function chooseNail(q: NailQuery, stock: StockLine[], rules?: Partial<SizingRules>): SizingResult {
  const r = resolveRules(rules)
  const query = requireQuery(q)
  const reamed = requirePositive(query, 'reamedDiameterMm', 'Reamed diameter must be a positive number in mm')
  const reading = requirePositive(query, 'lengthMm', 'Nail length reading must be a positive number in mm')
  const native = requirePositive(
    query,
    'nativeAngleDeg',
    'Native neck-shaft angle must be a positive number in degrees, below 180',
  )
  if (native.gte(180)) {
    throw new SizingInputError('nativeAngleDeg', 'Native neck-shaft angle must be a positive number in degrees, below 180')
  }
  const side = requireSide(query.side)
  const nailType = optionalNailType(query.nailType)
  const lines = validateStock(stock)

  const warnings: Finding[] = []
  const reasons: string[] = []
  const clearance = dec(r.nailClearanceMm)
  const maxDiameter = reamed.minus(clearance)

  const typeWord = nailType ? `${nailType} ` : ''
  reasons.push(`Side ${side}: only ${side}-sided and unsided ${typeWord}nails are considered.`)

  const eligible = lines.filter(
    (l) =>
      l.kind === 'nail' &&
      (l.side === undefined || l.side === null || l.side === side) &&
      (nailType === undefined || l.nailType === nailType),
  )

  const fitsDiameter = (l: StockLine) => dec(l.diameterMm).lte(maxDiameter)
  const fitsLength = (l: StockLine) => dec(l.lengthMm).lte(reading)
  const feasible = eligible.filter((l) => fitsDiameter(l) && fitsLength(l))

  const diameterLead =
    `Reamed to ${fmt(reamed)} mm; with ${fmtClearance(r.nailClearanceMm)} mm clearance ` +
    `the nail may be at most ${fmt(maxDiameter)} mm`
  const lengthLead = `Length ${fmt(reading)} mm read over the guide wire`

  const shortNailWarning = (chosenType: NailType | undefined) => {
    // Wide canals let a short nail toggle (Mahmoud 2025).
    if ((nailType === 'short' || chosenType === 'short') && reamed.gte(15)) {
      warnings.push({
        code: 'short_nail_wide_canal',
        message:
          `Short nail in a canal reamed to ${fmt(reamed)} mm: in canals of 15 mm or more, ` +
          '15.8% (16 of 101) of short nails toggled more than 4°. Consider a long nail.',
        source: SOURCES.shortNailWideCanal,
      })
    }
  }

  if (eligible.length === 0) {
    warnings.push({
      code: 'no_nail_for_side_or_type',
      message: `No ${side}-sided or unsided ${typeWord}nail is in the stock list.`,
      source: SOURCES.sided,
    })
    shortNailWarning(undefined)
    return finish(null, [], warnings, reasons, 'nail')
  }

  if (feasible.length === 0) {
    const anyDiameter = eligible.some(fitsDiameter)
    const anyLength = eligible.some(fitsLength)
    if (!anyDiameter) {
      reasons.push(`${diameterLead}: no stocked nail is that narrow.`)
      warnings.push({
        code: 'canal_too_narrow',
        message:
          `No stocked nail is ${fmt(maxDiameter)} mm or narrower (reamed ${fmt(reamed)} mm less ` +
          `${fmtClearance(r.nailClearanceMm)} mm clearance).`,
        source: SOURCES.reaming,
      })
    }
    if (!anyLength) {
      reasons.push(`${lengthLead}; no stocked nail is that short.`)
      warnings.push({
        code: 'no_length_at_or_below_reading',
        message: `No stocked nail is ${fmt(reading)} mm or shorter. Nail lengths are never rounded up.`,
        source: SOURCES.nailLength,
      })
    }
    if (anyDiameter && anyLength) {
      warnings.push({
        code: 'no_size_within_limits',
        message:
          `No stocked nail is both ${fmt(maxDiameter)} mm or narrower and ${fmt(reading)} mm or shorter.`,
        source: SOURCES.commonPractice,
      })
    }
    shortNailWarning(undefined)
    return finish(null, [], warnings, reasons, 'nail')
  }

  // Step 3: nail type from the longest fitting line, when none was asked for.
  let pool = feasible
  if (nailType === undefined) {
    const longest = distinctSorted(feasible.map((l) => l.lengthMm)).pop() as Dec
    const types = new Set(feasible.filter((l) => dec(l.lengthMm).eq(longest)).map((l) => l.nailType))
    pool = feasible.filter((l) => types.has(l.nailType))
    const t = [...types][0]
    if (pool.length < feasible.length && types.size === 1 && t !== undefined) {
      reasons.push(`No nail type given: the ${fmt(reading)} mm reading calls for a ${t} nail.`)
    }
  }

  // Step 4: angle among fitting lines.
  const angles = distinctSorted(pool.map((l) => l.angleDeg as number))
  const notBelow = angles.find((a) => a.gte(native))
  let angle: Dec
  if (notBelow) {
    angle = notBelow
    reasons.push(`Native neck-shaft angle ${fmt(native)}°; smallest stocked angle not below it: ${fmt(angle)}°.`)
  } else {
    angle = angles[angles.length - 1] as Dec
    reasons.push(
      `Native neck-shaft angle ${fmt(native)}°; no stocked nail that fits has an angle at or above it: ` +
        `largest offered, ${fmt(angle)}°.`,
    )
    warnings.push({
      code: 'angle_below_native',
      message:
        `The nail angle ${fmt(angle)}° is below the native angle of ${fmt(native)}°. ` +
        'In one series, nails set below the native angle gave fewer good reductions (17% vs 60%).',
      source: SOURCES.parry,
    })
  }
  const atAngle = pool.filter((l) => dec(l.angleDeg as number).eq(angle))

  // Step 5: diameter.
  const diameter = distinctSorted(atAngle.map((l) => l.diameterMm)).pop() as Dec
  reasons.push(`${diameterLead}: largest stocked ${fmt(diameter)} mm.`)
  const atAngleDiameter = atAngle.filter((l) => dec(l.diameterMm).eq(diameter))

  // Step 6: length.
  const length = distinctSorted(atAngleDiameter.map((l) => l.lengthMm)).pop() as Dec
  const longestAtAngle = distinctSorted(atAngle.map((l) => l.lengthMm)).pop() as Dec
  if (length.lt(longestAtAngle)) {
    reasons.push(
      `${lengthLead}; longest stocked at or below it in ${fmt(diameter)} mm at ${fmt(angle)}°: ${fmt(length)} mm.`,
    )
    warnings.push({
      code: 'length_shortened_for_diameter',
      message:
        `A ${fmt(longestAtAngle)} mm nail at ${fmt(angle)}° is stocked only in thinner sizes; ` +
        `the ${fmt(diameter)} mm nail is ${fmt(length)} mm. Check whether a thinner, longer nail suits better.`,
      source: SOURCES.commonPractice,
    })
  } else {
    reasons.push(`${lengthLead}; longest stocked at or below it: ${fmt(length)} mm.`)
  }

  // Step 7: ties.
  const candidates = atAngleDiameter
    .filter((l) => dec(l.lengthMm).eq(length))
    .sort((a, b) => {
      const sa = a.side === side ? 0 : 1
      const sb = b.side === side ? 0 : 1
      return sa !== sb ? sa - sb : byId(a, b)
    })
  const ideal = candidates[0] as StockLine

  shortNailWarning(ideal.nailType)

  const alternatives = pickAlternatives(ideal, feasible, [
    (l) => absDiff(l.lengthMm, ideal.lengthMm),
    (l) => absDiff(l.diameterMm, ideal.diameterMm),
    (l) => absDiff(l.angleDeg as number, ideal.angleDeg as number),
  ])
  const lowAngleAlt = alternatives.filter((l) => dec(l.angleDeg as number).lt(native))
  if (lowAngleAlt.length > 0 && notBelow) {
    const ids = lowAngleAlt.map(describeLine).join('; ')
    reasons.push(
      lowAngleAlt.length === 1
        ? `Alternative ${ids} has an angle below the native ${fmt(native)}°.`
        : `Alternatives ${ids} have an angle below the native ${fmt(native)}°.`,
    )
  }

  return finish(ideal, alternatives, warnings, reasons, 'nail')
}

// ---------------------------------------------------------------------------------------
// Head element
// ---------------------------------------------------------------------------------------

/**
 * Head element (lag screw or blade): the reading over the guide wire puts the tip at the wire
 * tip, so the longest stocked length at or below reading − planned compression is offered,
 * never a longer one (Wheeless; common practice).
 */
export function chooseHeadElement(
  q: HeadElementQuery,
  stock: StockLine[],
  rules?: Partial<SizingRules>,
): SizingResult {
  resolveRules(rules)
  const query = requireQuery(q)
  const reading = requirePositive(query, 'readingMm', 'Head element reading must be a positive number in mm')
  let compression = new D(0)
  if (query.compressionMm !== undefined) {
    const c = query.compressionMm
    if (typeof c !== 'number' || !Number.isFinite(c) || c < 0) {
      throw new SizingInputError('compressionMm', 'Planned compression must be 0 or a positive number in mm')
    }
    compression = new D(c)
    if (compression.gte(reading)) {
      throw new SizingInputError('compressionMm', 'Planned compression must be less than the head element reading')
    }
  }
  const lines = validateStock(stock)
  const limit = reading.minus(compression)
  const warnings: Finding[] = []
  const reasons: string[] = []

  const lead =
    `Head element read at ${fmt(reading)} mm over the guide wire, less ${fmt(compression)} mm planned ` +
    `compression: at most ${fmt(limit)} mm, never rounded up`
  const fitting = lines.filter((l) => l.kind === 'head_element' && dec(l.lengthMm).lte(limit))
  if (fitting.length === 0) {
    reasons.push(`${lead}. No stocked head element is that short.`)
    warnings.push({
      code: 'no_length_at_or_below_reading',
      message: `No stocked head element is ${fmt(limit)} mm or shorter.`,
      source: SOURCES.headElement,
    })
    return finish(null, [], warnings, reasons, 'head element')
  }
  const ideal = [...fitting].sort((a, b) => dec(b.lengthMm).cmp(dec(a.lengthMm)) || byId(a, b))[0] as StockLine
  reasons.push(`${lead}. Longest stocked at or below it: ${fmt(ideal.lengthMm)} mm.`)

  const alternatives = pickAlternatives(ideal, fitting, [
    (l) => absDiff(l.lengthMm, ideal.lengthMm),
    (l) => absDiff(l.diameterMm, ideal.diameterMm),
  ])
  return finish(ideal, alternatives, warnings, reasons, 'head element')
}

// ---------------------------------------------------------------------------------------
// Distal locking screw
// ---------------------------------------------------------------------------------------

/**
 * Distal locking screw from the depth-gauge reading. 'up' (default): shortest stocked length at
 * or above the reading, so the tip passes the far cortex (AO Surgery Reference). 'down': longest
 * at or below it, for facilities whose gauge already includes the overhang.
 */
export function chooseDistalScrew(
  q: DistalScrewQuery,
  stock: StockLine[],
  rules?: Partial<SizingRules>,
): SizingResult {
  const r = resolveRules(rules)
  const query = requireQuery(q)
  const depth = requirePositive(query, 'depthMm', 'Depth reading must be a positive number in mm')
  const lines = validateStock(stock)
  const up = r.distalScrewRounding === 'up'
  const warnings: Finding[] = []
  const reasons: string[] = []

  const fitting = lines.filter(
    (l) => l.kind === 'distal_screw' && (up ? dec(l.lengthMm).gte(depth) : dec(l.lengthMm).lte(depth)),
  )
  const lead = up
    ? `Depth ${fmt(depth)} mm read with the depth gauge; rounded up so the tip passes the far cortex`
    : `Depth ${fmt(depth)} mm read with the depth gauge; rounded down by local rule`
  if (fitting.length === 0) {
    reasons.push(`${lead}. No stocked distal screw is ${up ? 'that long' : 'that short'}.`)
    warnings.push({
      code: 'no_length_for_depth',
      message: up
        ? `No stocked distal screw is ${fmt(depth)} mm or longer.`
        : `No stocked distal screw is ${fmt(depth)} mm or shorter.`,
      source: up ? SOURCES.distalUp : SOURCES.distalDown,
    })
    return finish(null, [], warnings, reasons, 'distal screw')
  }
  const ideal = [...fitting].sort(
    (a, b) => (up ? dec(a.lengthMm).cmp(dec(b.lengthMm)) : dec(b.lengthMm).cmp(dec(a.lengthMm))) || byId(a, b),
  )[0] as StockLine
  reasons.push(
    up
      ? `${lead}: shortest stocked at or above it: ${fmt(ideal.lengthMm)} mm.`
      : `${lead}: longest stocked at or below it: ${fmt(ideal.lengthMm)} mm.`,
  )
  const gap = absDiff(ideal.lengthMm, depth.toNumber())
  if (up && gap.gt(2)) {
    // The aim is about 1–2 mm past the far cortex (AO Surgery Reference).
    reasons.push(
      `That is ${fmt(gap)} mm longer than the reading; the aim is about 1–2 mm past the far cortex.`,
    )
  }

  const alternatives = pickAlternatives(ideal, fitting, [
    (l) => absDiff(l.lengthMm, ideal.lengthMm),
    (l) => absDiff(l.diameterMm, ideal.diameterMm),
  ])
  return finish(ideal, alternatives, warnings, reasons, 'distal screw')
}

// ---------------------------------------------------------------------------------------
// Tip-apex distance
// ---------------------------------------------------------------------------------------

/**
 * TAD = Xap·(Dtrue/Dap) + Xlat·(Dtrue/Dlat) (Baumgaertner 1995): the known screw diameter
 * calibrates each view, so no magnification marker is needed. Rounded half-up to 0.01 mm;
 * the limit is checked on the rounded value so the flag always agrees with the number shown
 * (exactly 25.00 passes, "≤ 25").
 */
export function tipApexDistance(m: TipApexMeasurement, rules?: Partial<SizingRules>): TipApexResult {
  const r = resolveRules(rules)
  if (!isRecord(m)) throw new SizingInputError('measurement', 'The tip-apex measurements are missing')
  const xap = requirePositive(m, 'apTipApexMm', 'Tip-apex distance on the AP view must be a positive number in mm')
  const dap = requirePositive(m, 'apScrewDiameterMm', 'Screw diameter measured on the AP view must be a positive number in mm')
  const xlat = requirePositive(m, 'latTipApexMm', 'Tip-apex distance on the lateral view must be a positive number in mm')
  const dlat = requirePositive(
    m,
    'latScrewDiameterMm',
    'Screw diameter measured on the lateral view must be a positive number in mm',
  )
  const dtrue = requirePositive(m, 'trueScrewDiameterMm', 'True screw diameter must be a positive number in mm')

  // Multiply before dividing so exact cases (15·10/12 = 12.5) stay exact.
  const tad = xap.times(dtrue).div(dap).plus(xlat.times(dtrue).div(dlat))
  const rounded = tad.toDecimalPlaces(2, Decimal.ROUND_HALF_UP)
  return { tadMm: rounded.toNumber(), overLimit: rounded.gt(dec(r.tadLimitMm)) }
}

/** Warning for a tip-apex distance over the limit; null when within it. */
export function tadFinding(result: TipApexResult, rules?: Partial<SizingRules>): Finding | null {
  if (!result || !result.overLimit) return null
  const r = resolveRules(rules)
  return {
    code: 'tad_over_limit',
    message:
      `Tip-apex distance ${fmt(result.tadMm)} mm is above the ${fmt(r.tadLimitMm)} mm limit. ` +
      'In the original series none of the 120 screws at 25 mm or less cut out; mean distance was 38 mm in cut-outs.',
    source: SOURCES.tad,
  }
}
