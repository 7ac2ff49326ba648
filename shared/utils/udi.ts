/**
 * UDI parser: turns what a scanner (or a person) sends into GTIN/DI, lot, serial and dates.
 *
 * Pure TypeScript with no imports, so the same code runs in the browser (scan screen) and on
 * the server (re-validation before anything is stored). It never throws and never guesses: an
 * input that could mean two things, or that breaks a rule of the standard, is refused with a
 * stable `code` and a message a nurse can act on.
 *
 * Accepted inputs
 *  - GS1 element strings with FNC1 sent as GS (U+001D), optionally after an AIM symbology
 *    identifier (`]d2` `]C1` `]Q3` `]e0` `]J1`) or after a leading GS (zxing's DataMatrix output).
 *    U+001E and the facility's configured `gsSubstitute` are read as GS.
 *  - GS1 human-readable form as typed from a label: `(01)09506000134352(17)261231(10)ABC123`.
 *  - GS1 Digital Link URIs (uncompressed, numeric AIs only): `https://host/01/{gtin}/10/{lot}?17=…`.
 *  - HIBC primary, secondary and combined data structures (mod-43 check character), optionally
 *    with Code 39 `*` start/stop or an AIM identifier (`]A0` `]C0` `]d1` `]Q1`).
 *
 * Sources are named beside each rule. "standards.md" is the project's standards fact sheet;
 * the AI table follows the GS1 Barcode Syntax Dictionary.
 *
 * Limits no parser can remove (so the UI should still show what was read):
 *  - A lot or serial has no check digit. If a reader drops a GS, a variable field runs on into
 *    the next one exactly as the standard says (e.g. Code 128 read without a GS1 setting).
 *  - The HIBC mod-43 check gives '0' the value 0, so an inserted or lost '0' goes unnoticed.
 */

// ---------------------------------------------------------------------------------------------
// Public types
// ---------------------------------------------------------------------------------------------

export type UdiIssuer = 'GS1' | 'HIBCC'

/** Stable error codes; the UI may branch on them, so never rename one. */
export const UDI_ERROR_CODES = [
  'empty', // nothing was read
  'unknown_format', // not GS1, HIBC or a GS1 Digital Link (includes ordinary web addresses)
  'bad_character', // a character the format does not allow
  'bad_check_digit', // GS1 mod-10 check digit wrong (GTIN, SSCC, GLN …)
  'bad_check_character', // HIBC mod-43 check character wrong
  'bad_date', // impossible date or time
  'truncated', // data ends too early / a field is shorter than its fixed length
  'too_long', // a field is longer than allowed (or the whole input is absurdly long)
  'unknown_ai', // a GS1 Application Identifier not in our table: we cannot split safely
  'missing_gtin', // GS1 data without (01)
  'missing_ai', // a GS1 field whose required partner field is absent
  'conflicting_ai', // repeated field with different values, or fields that exclude each other
  'bad_format', // structure does not follow the standard (e.g. two separators, bad HIBC flag)
  'bad_option', // the caller's options are invalid (facility configuration)
  'internal', // a bug; should never be seen
] as const
export type UdiErrorCode = (typeof UDI_ERROR_CODES)[number]

export interface UdiError {
  code: UdiErrorCode
  message: string
}

export type UdiParse =
  | {
      ok: true
      issuer: UdiIssuer
      /** GS1: the 14-digit GTIN. HIBC: LIC + product number + unit of measure. */
      di?: string
      /** GS1 only: the 14-digit GTIN (same as di). */
      gtin?: string
      lot?: string
      serial?: string
      /** YYYY-MM-DD */
      expiry?: string
      /** YYYY-MM-DD */
      manufactured?: string
      /**
       * GS1: AI → raw data string exactly as encoded (e.g. {'01': '0950…', '17': '261231'}).
       * HIBC: named parts (symbol, lic, pcn, um, check, link, lot, serial, quantity,
       * expiryFormat, expiryRaw, expiryHour, manufacturedRaw).
       */
      fields: Record<string, string>
    }
  | { ok: false; error: UdiError }

export interface ParseUdiOptions {
  /** YYYY-MM-DD; only the year is used, for the GS1 century rule. Default: the current date. */
  today?: string
  /**
   * The single character a facility's keyboard-wedge scanners send in place of GS (U+001D),
   * e.g. '~' or '|'. It is mapped back to GS before GS1 parsing. It must not be a character
   * that can occur in GS1 data, so any GS1 CSET 82 character (letters, digits and
   * ! " % & ' ( ) * + , - . / : ; < = > ? _) is refused, as are whitespace and ']' (which starts
   * an AIM identifier): a lot like "AB-12" would otherwise be split silently.
   */
  gsSubstitute?: string
}

// ---------------------------------------------------------------------------------------------
// Small helpers
// ---------------------------------------------------------------------------------------------

const GS = '\u001D'
const RS = '\u001E'
const MAX_INPUT = 4096 // no UDI comes near this; refuse early instead of scanning huge input

/** Thrown internally and turned into `{ ok: false }` by parseUdi; never escapes. */
class UdiFailure {
  constructor(
    readonly code: UdiErrorCode,
    readonly message: string,
  ) {}
}

function fail(code: UdiErrorCode, message: string): never {
  throw new UdiFailure(code, message)
}

const isDigits = (s: string): boolean => /^[0-9]+$/.test(s)

/** Describe a character for a message without echoing invisible bytes. */
function describeChar(ch: string): string {
  const cp = ch.codePointAt(0) ?? 0
  if (ch === ' ') return 'a space'
  if (cp === 0x1d) return 'a group separator'
  if (cp < 0x20 || cp === 0x7f) return 'a control character'
  if (/[\p{C}\p{Z}]/u.test(ch)) return 'an invisible character'
  return `the character ${ch}`
}

const RESCAN = 'Rescan, or type the UDI from the label.'

// ---------------------------------------------------------------------------------------------
// GS1 check digit (GS1 General Specifications; standards.md A1.5)
// ---------------------------------------------------------------------------------------------

/**
 * GS1 mod-10 check digit for the data digits of a GTIN-8/12/13/14, GLN or SSCC (weights 3,1
 * from the right). Named for the common case (13 data digits of a GTIN-14) but any 1–17 digits
 * work. Throws RangeError on anything that is not digits: a programming error, not a scan error.
 */
export function gtinCheckDigit(digits13: string): number {
  if (typeof digits13 !== 'string' || !/^[0-9]{1,17}$/.test(digits13)) {
    throw new RangeError('gtinCheckDigit expects 1 to 17 digits')
  }
  let sum = 0
  for (let i = digits13.length - 1, pos = 1; i >= 0; i--, pos++) {
    sum += (digits13.charCodeAt(i) - 48) * (pos % 2 === 1 ? 3 : 1)
  }
  return (10 - (sum % 10)) % 10
}

/** True for a GTIN-8, -12, -13 or -14 whose check digit is right. Never throws. */
export function isValidGtin(s: string): boolean {
  if (typeof s !== 'string' || !/^(?:[0-9]{8}|[0-9]{12,14})$/.test(s)) return false
  return gtinCheckDigit(s.slice(0, -1)) === s.charCodeAt(s.length - 1) - 48
}

// ---------------------------------------------------------------------------------------------
// HIBC mod-43 check character (ANSI/HIBC 2.6 via standards.md A2.4)
// ---------------------------------------------------------------------------------------------

const HIBC_SET = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ-. $/+%'

/**
 * HIBC modulo-43 check character over `s` (from the leading '+' on, without the Code 39 '*').
 * Returns '' if `s` has a character outside the 43-character HIBC set. May return ' ' (space),
 * which a Code 39 label prints as '_'.
 */
export function hibcCheckChar(s: string): string {
  if (typeof s !== 'string') return ''
  let sum = 0
  for (const ch of s) {
    const v = HIBC_SET.indexOf(ch)
    if (v < 0) return ''
    sum += v
  }
  return HIBC_SET.charAt(sum % 43)
}

// ---------------------------------------------------------------------------------------------
// Dates
// ---------------------------------------------------------------------------------------------

const isLeap = (y: number): boolean => (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0
const daysInMonth = (y: number, m: number): number =>
  [31, isLeap(y) ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][m - 1] ?? 0
const pad = (n: number, w: number): string => String(n).padStart(w, '0')
const iso = (y: number, m: number, d: number): string => `${pad(y, 4)}-${pad(m, 2)}-${pad(d, 2)}`

/**
 * GS1 General Specifications §7.12 "Determination of century in dates": a two-digit year lies
 * from 49 years in the past to 50 years in the future of the current year.
 */
export function gs1FullYear(yy: number, currentYear: number): number {
  const century = currentYear - (currentYear % 100)
  const d = yy - (currentYear % 100)
  if (d >= 51) return century - 100 + yy
  if (d <= -50) return century + 100 + yy
  return century + yy
}

/** YYMMDD → YYYY-MM-DD or null. DD=00 (only where the AI allows it) = last day of the month. */
function gs1Date(yymmdd: string, currentYear: number, allowDay00: boolean): string | null {
  if (!/^[0-9]{6}$/.test(yymmdd)) return null
  const yy = Number(yymmdd.slice(0, 2))
  const mm = Number(yymmdd.slice(2, 4))
  let dd = Number(yymmdd.slice(4, 6))
  if (mm < 1 || mm > 12) return null
  const y = gs1FullYear(yy, currentYear)
  if (dd === 0) {
    if (!allowDay00) return null
    dd = daysInMonth(y, mm) // §7.12 / A1.6: "last day of the noted month including … leap years"
  }
  if (dd > daysInMonth(y, mm)) return null
  return iso(y, mm, dd)
}

// ---------------------------------------------------------------------------------------------
// GS1 AI table (GS1 Barcode Syntax Dictionary, gs1/gs1-syntax-dictionary, entries as written
// there; a curated subset: product identification, production data, healthcare and the keys a
// hospital might scan by mistake). AIs outside it are refused with `unknown_ai`, because without
// its length we cannot know where the next field starts.
// Spec syntax: components separated by spaces; "N6" fixed, "X..20" variable (1–20); "[…]"
// optional; ",lint" names a check. N = digits, X = GS1 CSET 82.
// ---------------------------------------------------------------------------------------------

const AI_SPECS: ReadonlyArray<readonly [string, string]> = [
  ['00', 'N18,csum'],
  ['01', 'N14,csum'],
  ['02', 'N14,csum'],
  ['03', 'N14,csum'],
  ['10', 'X..20'],
  ['11', 'N6,yymmd0'],
  ['13', 'N6,yymmd0'],
  ['15', 'N6,yymmd0'],
  ['16', 'N6,yymmd0'],
  ['17', 'N6,yymmd0'],
  ['20', 'N2'],
  ['21', 'X..20'],
  ['22', 'X..20'],
  ['235', 'X..28'],
  ['240', 'X..30'],
  ['241', 'X..30'],
  ['242', 'N..6'],
  ['243', 'X..20'],
  ['250', 'X..30'],
  ['251', 'X..30'],
  ['253', 'N13,csum [X..17]'],
  ['255', 'N13,csum [N..12]'],
  ['30', 'N..8'],
  // Trade measures 310n–369n: N6, n = decimal places 0–5 (ranges as in the dictionary).
  ...measureAis(),
  ['37', 'N..8'],
  ['400', 'X..30'],
  ['401', 'X..30'],
  ['402', 'N17,csum'],
  ['403', 'X..30'],
  ['410', 'N13,csum'],
  ['411', 'N13,csum'],
  ['412', 'N13,csum'],
  ['413', 'N13,csum'],
  ['414', 'N13,csum'],
  ['415', 'N13,csum'],
  ['416', 'N13,csum'],
  ['417', 'N13,csum'],
  ['420', 'X..20'],
  ['421', 'N3 X..9'],
  ['422', 'N3'],
  ['423', 'N3 [N3] [N3] [N3] [N3]'],
  ['424', 'N3'],
  ['425', 'N3 [N3] [N3] [N3] [N3]'],
  ['426', 'N3'],
  ['427', 'X..3'],
  ['7001', 'N13'],
  ['7002', 'X..30'],
  ['7003', 'N6,yymmdd N4,hhmi'],
  ['7004', 'N..4'],
  ['7005', 'X..12'],
  ['7006', 'N6,yymmdd'],
  ['7007', 'N6,yymmdd [N6],yymmdd'],
  ['7008', 'X..3'],
  ['7009', 'X..10'],
  ['7010', 'X..2'],
  ['7011', 'N6,yymmdd [N4],hhmi'],
  ['7021', 'X..20'],
  ['7023', 'X..30'],
  ['710', 'X..20'],
  ['711', 'X..20'],
  ['712', 'X..20'],
  ['713', 'X..20'],
  ['714', 'X..20'],
  ['715', 'X..20'],
  ['716', 'X..20'],
  ['7240', 'X..20'],
  ['8002', 'X..20'],
  ['8003', 'N1 N13,csum [X..16]'],
  ['8004', 'X..30'],
  ['8005', 'N6'],
  ['8006', 'N14,csum N4'],
  ['8008', 'N6,yymmdd N2,hh [N2],mi [N2],ss'],
  ['8009', 'X..50'],
  ['8012', 'X..20'],
  ['8017', 'N18,csum'],
  ['8018', 'N18,csum'],
  ['8200', 'X..70'],
  ['90', 'X..30'],
  ['91', 'X..90'],
  ['92', 'X..90'],
  ['93', 'X..90'],
  ['94', 'X..90'],
  ['95', 'X..90'],
  ['96', 'X..90'],
  ['97', 'X..90'],
  ['98', 'X..90'],
  ['99', 'X..90'],
]

function measureAis(): Array<readonly [string, string]> {
  // First three digits of each family and the highest decimal-place digit (always 5).
  const families = [
    ...range(310, 316),
    ...range(320, 329),
    ...range(330, 337),
    ...range(340, 349),
    ...range(350, 357),
    ...range(360, 369),
  ]
  const out: Array<readonly [string, string]> = []
  for (const f of families) for (let n = 0; n <= 5; n++) out.push([`${f}${n}`, 'N6'])
  return out
}

function range(a: number, b: number): number[] {
  const r: number[] = []
  for (let i = a; i <= b; i++) r.push(i)
  return r
}

type Lint = 'csum' | 'yymmd0' | 'yymmdd' | 'hhmi' | 'hh' | 'mi' | 'ss'
interface Component {
  cset: 'N' | 'X'
  min: number
  max: number
  optional: boolean
  lint?: Lint
}

function parseSpec(spec: string): Component[] {
  return spec.split(' ').map((part) => {
    const m = /^(\[)?([NX])(\.\.)?([0-9]+)(\])?(?:,([a-z0-9]+))?$/.exec(part)
    if (!m) throw new Error(`bad AI spec ${spec}`) // module-load time, fixed data: cannot happen
    const max = Number(m[4])
    const comp: Component = { cset: m[2] as 'N' | 'X', min: m[3] ? 1 : max, max, optional: !!m[1] }
    if (m[6]) comp.lint = m[6] as Lint
    return comp
  })
}

const AI_TABLE: ReadonlyMap<string, Component[]> = new Map(AI_SPECS.map(([ai, spec]) => [ai, parseSpec(spec)]))

/**
 * Element strings with a predefined total length (AI + data), keyed by the first two digits of
 * the AI: these need no FNC1 after them (GS1 General Specifications §7.8.4; standards.md A1.3).
 * The prefix decides, not the AI's own format: (7003) is fixed-length yet needs FNC1.
 */
const PREDEFINED_LENGTH: Readonly<Record<string, number>> = {
  '00': 20,
  '01': 16,
  '02': 16,
  '03': 16,
  '04': 18,
  '11': 8,
  '12': 8,
  '13': 8,
  '14': 8,
  '15': 8,
  '16': 8,
  '17': 8,
  '18': 8,
  '19': 8,
  '20': 4,
  '31': 10,
  '32': 10,
  '33': 10,
  '34': 10,
  '35': 10,
  '36': 10,
  '41': 16,
}

/** Plain-language names for messages. */
const AI_NAMES: Readonly<Record<string, string>> = {
  '00': 'shipping container code (SSCC)',
  '01': 'GTIN',
  '02': 'content GTIN',
  '03': 'made-to-order GTIN',
  '10': 'lot number',
  '11': 'production date',
  '13': 'packaging date',
  '15': 'best-before date',
  '16': 'sell-by date',
  '17': 'expiry date',
  '21': 'serial number',
  '22': 'variant number',
  '30': 'count',
  '240': 'additional product ID',
  '241': 'customer part number',
  '7003': 'expiry date and time',
  '8018': 'patient or person number',
}
const aiName = (ai: string): string => AI_NAMES[ai] ?? `field (${ai})`

/**
 * Fields that may not appear together (the dictionary's `ex=` attributes for AIs in our table),
 * plus "one of each family": two different AIs sharing the first three digits in 31–36 (e.g.
 * net weight given twice with different decimals).
 */
const EXCLUSIVE: ReadonlyArray<readonly [string, string]> = [
  ['01', '02'],
  ['01', '03'],
  ['01', '37'],
  ['01', '255'],
  ['01', '8006'],
  ['02', '03'],
  ['03', '37'],
  ['21', '235'],
  ['8006', '37'],
  ['422', '426'],
  ['423', '426'],
  ['424', '426'],
  ['425', '426'],
]

/** Partner fields required beyond (01) (the dictionary's `req=` attributes). */
const REQUIRES: Readonly<Record<string, string>> = {
  '250': '21', // secondary serial needs a serial
  '7004': '10', // active potency needs a lot
}

/** Fixed-length element strings first, (10) and (21) last: fewest separators (A1.4 rule 6). */
function hriOrder(ai: string): [number, string] {
  if (ai === '01') return [0, ai]
  if (ai === '10') return [3, ai]
  if (ai === '21') return [4, ai]
  return [PREDEFINED_LENGTH[ai.slice(0, 2)] ? 1 : 2, ai]
}

// ---------------------------------------------------------------------------------------------
// GS1 CSET 82 (GS1 General Specifications figure 7.11-1; standards.md A1.2)
// ---------------------------------------------------------------------------------------------

const CSET82 = /^[!"%&'()*+,\-./0-9:;<=>?A-Z_a-z]*$/
const isCset82Char = (ch: string): boolean => ch.length === 1 && CSET82.test(ch)

// ---------------------------------------------------------------------------------------------
// GS1: validation of one element string and of the whole set
// ---------------------------------------------------------------------------------------------

interface Ctx {
  year: number
}

function validateValue(ai: string, value: string, ctx: Ctx): void {
  const comps = AI_TABLE.get(ai)
  if (!comps) return fail('unknown_ai', unknownAiMessage(ai))
  const name = aiName(ai)
  // First the shape (characters, lengths) of every component, then the content checks, so a
  // too-long GTIN is reported as too long rather than as a wrong check digit.
  const parts: Array<readonly [Component, string]> = []
  let pos = 0
  for (const c of comps) {
    if (pos >= value.length) {
      if (c.optional) break
      fail('truncated', `The ${name} in the code is incomplete. ${RESCAN}`)
    }
    const part = c.min === c.max ? value.slice(pos, pos + c.max) : value.slice(pos)
    for (const ch of part) {
      const ok = c.cset === 'N' ? ch >= '0' && ch <= '9' : isCset82Char(ch)
      if (!ok) fail('bad_character', `The ${name} contains ${describeChar(ch)}, which a UDI cannot have. ${RESCAN}`)
    }
    if (part.length < c.min) fail('truncated', `The ${name} in the code is incomplete. ${RESCAN}`)
    if (part.length > c.max) {
      fail('too_long', `The ${name} is longer than a UDI allows (${c.max} characters). ${RESCAN}`)
    }
    parts.push([c, part])
    pos += part.length
  }
  if (pos < value.length) {
    const max = comps.reduce((n, c) => n + c.max, 0)
    fail('too_long', `The ${name} is longer than a UDI allows (${max} characters). ${RESCAN}`)
  }
  for (const [c, part] of parts) lint(ai, c.lint, part, ctx)
}

function lint(ai: string, l: Lint | undefined, part: string, ctx: Ctx): void {
  const name = aiName(ai)
  const badDate = (): never =>
    fail('bad_date', `The ${name} in the code is not a real date or time (${part}). Rescan, or type the date from the label.`)
  switch (l) {
    case undefined:
      return
    case 'csum':
      if (gtinCheckDigit(part.slice(0, -1)) !== Number(part.slice(-1))) {
        fail(
          'bad_check_digit',
          ai === '01'
            ? 'The GTIN check digit does not match — rescan or type it from the label.'
            : `The check digit of the ${name} does not match — rescan or type it from the label.`,
        )
      }
      return
    case 'yymmd0': // GS1 Barcode Syntax Dictionary linter: DD=00 allowed (11,13,15,16,17)
      if (gs1Date(part, ctx.year, true) === null) badDate()
      return
    case 'yymmdd': // DD=00 not allowed (7003, 7006, 7007, 7011, 8008)
      if (gs1Date(part, ctx.year, false) === null) badDate()
      return
    case 'hhmi':
      if (Number(part.slice(0, 2)) > 23 || Number(part.slice(2, 4)) > 59) badDate()
      return
    case 'hh':
      if (Number(part) > 23) badDate()
      return
    case 'mi':
    case 'ss':
      if (Number(part) > 59) badDate()
      return
  }
}

function unknownAiMessage(digits: string): string {
  return (
    `The code contains a GS1 field this app does not know (it starts with ${digits}), so it cannot be ` +
    'read safely. Type the GTIN, lot and expiry from the label.'
  )
}

/** Checks across fields, then builds the result. `pairs` are in scan order. */
function gs1Result(pairs: ReadonlyArray<readonly [string, string]>, ctx: Ctx): UdiParse {
  const fields: Record<string, string> = {}
  for (const [ai, value] of pairs) {
    validateValue(ai, value, ctx)
    const prev = fields[ai]
    if (prev !== undefined && prev !== value) {
      fail('conflicting_ai', `The code gives two different values for the ${aiName(ai)}. Do not rely on it; type the UDI from the label.`)
    }
    fields[ai] = value
  }
  const has = (ai: string): boolean => fields[ai] !== undefined
  for (const [a, b] of EXCLUSIVE) {
    if (has(a) && has(b)) fail('conflicting_ai', exclusiveMessage(a, b))
  }
  const measures = Object.keys(fields).filter((ai) => /^3[1-6]/.test(ai))
  for (const a of measures) {
    for (const b of measures) {
      if (a < b && a.slice(0, 3) === b.slice(0, 3)) fail('conflicting_ai', exclusiveMessage(a, b))
    }
  }
  const gtin = fields['01']
  if (gtin === undefined) {
    fail('missing_gtin', 'This code has no GTIN (product number). Scan the barcode that includes the GTIN, marked (01) on the label.')
  }
  for (const [ai, needed] of Object.entries(REQUIRES)) {
    if (has(ai) && !has(needed)) {
      fail(
        'missing_ai',
        `The code has a ${aiName(ai)} but no ${aiName(needed)}, so it is incomplete. Scan the other barcode on the label, or type the UDI from the label.`,
      )
    }
  }
  const out: UdiOk = { ok: true, issuer: 'GS1', di: gtin, gtin, fields }
  if (fields['10'] !== undefined) out.lot = fields['10']
  if (fields['21'] !== undefined) out.serial = fields['21']
  if (fields['17'] !== undefined) out.expiry = gs1Date(fields['17'], ctx.year, true) ?? undefined
  if (fields['11'] !== undefined) out.manufactured = gs1Date(fields['11'], ctx.year, true) ?? undefined
  return out
}

function exclusiveMessage(a: string, b: string): string {
  return `The code has fields that cannot go together (${aiName(a)} and ${aiName(b)}). Do not rely on it; type the UDI from the label.`
}

// ---------------------------------------------------------------------------------------------
// GS1 element string (FNC1 as GS)
// ---------------------------------------------------------------------------------------------

/** Find the AI at `i`: GS1 AIs are prefix-free, so at most one of 2, 3 or 4 digits matches. */
function readAi(s: string, i: number): string {
  for (const len of [2, 3, 4]) {
    const cand = s.slice(i, i + len)
    if (cand.length === len && isDigits(cand) && AI_TABLE.has(cand)) return cand
  }
  const head = /^[0-9]*/.exec(s.slice(i, i + 4))?.[0] ?? ''
  if (head.length < 2) {
    if (i + head.length >= s.length) fail('truncated', `The code seems cut short. ${RESCAN}`)
    const ch = s.charAt(i + head.length)
    fail(
      isCset82Char(ch) ? 'bad_format' : 'bad_character',
      isCset82Char(ch)
        ? `The code does not follow the GS1 layout (a field number was expected). ${RESCAN}`
        : `The code contains ${describeChar(ch)}, which a UDI cannot have. ${RESCAN}`,
    )
  }
  // The string ended inside what could still be a known 3- or 4-digit AI.
  if (i + head.length >= s.length && head.length < 4) {
    for (const ai of AI_TABLE.keys()) {
      if (ai.length > head.length && ai.startsWith(head)) fail('truncated', `The code seems cut short. ${RESCAN}`)
    }
  }
  return fail('unknown_ai', unknownAiMessage(head))
}

function parseElementString(s: string, ctx: Ctx): UdiParse {
  const pairs: Array<readonly [string, string]> = []
  let i = 0
  // GenSpecs §7.8.6.3 (standards.md A1.4 rule 4): tolerate one separator after any element string.
  let separatorAllowed = false
  while (i < s.length) {
    if (s.charAt(i) === GS) {
      if (!separatorAllowed) fail('bad_format', `The code does not follow the GS1 layout (two separators in a row). ${RESCAN}`)
      separatorAllowed = false
      i++
      continue
    }
    const ai = readAi(s, i)
    i += ai.length
    let value: string
    const total = PREDEFINED_LENGTH[ai.slice(0, 2)]
    if (total !== undefined) {
      value = s.slice(i, i + total - ai.length)
      const gsAt = value.indexOf(GS)
      if (gsAt >= 0) value = value.slice(0, gsAt)
      if (value.length < total - ai.length) {
        // A wrong character is the likelier cause than a short field; let the value check say so.
        if (/[^0-9]/.test(value)) validateValue(ai, value, ctx)
        fail('truncated', `The ${aiName(ai)} in the code is incomplete. ${RESCAN}`)
      }
    } else {
      const end = s.indexOf(GS, i)
      value = s.slice(i, end < 0 ? s.length : end)
      if (value === '') fail('truncated', `The ${aiName(ai)} in the code is empty. ${RESCAN}`)
    }
    i += value.length
    pairs.push([ai, value])
    separatorAllowed = true
  }
  if (pairs.length === 0) fail('empty', 'Nothing was read. Scan the code again.')
  return gs1Result(pairs, ctx)
}

// ---------------------------------------------------------------------------------------------
// GS1 human-readable interpretation, as typed from a label
// ---------------------------------------------------------------------------------------------

/**
 * "(01)…(17)…(10)…": parentheses are never encoded (standards.md A1.4 rule 5), so every "(" + 2–4
 * digits + ")" is read as an AI marker. A lot that itself contains such a group (e.g. "A(21)B")
 * cannot be typed unambiguously in this form; it is refused rather than split by a guess.
 * Whitespace around markers is allowed (labels often print a space between fields).
 */
function parseHri(s: string, ctx: Ctx): UdiParse {
  const marker = /\s*\(([0-9]{2,4})\)\s*/g
  const pairs: Array<readonly [string, string]> = []
  let last: { ai: string; start: number } | null = null
  for (let m = marker.exec(s); m !== null; m = marker.exec(s)) {
    if (last === null && m.index !== 0) break
    if (last !== null) pairs.push([last.ai, s.slice(last.start, m.index)])
    last = { ai: m[1] ?? '', start: m.index + m[0].length }
  }
  if (last === null) return fail('bad_format', `A typed UDI should start with a field number in brackets, like (01). ${RESCAN}`)
  pairs.push([last.ai, s.slice(last.start)])
  for (const [ai, value] of pairs) {
    if (!AI_TABLE.has(ai)) fail('unknown_ai', unknownAiMessage(ai))
    if (value === '') fail('truncated', `The ${aiName(ai)} is empty. ${RESCAN}`)
  }
  return gs1Result(pairs, ctx)
}

// ---------------------------------------------------------------------------------------------
// GS1 Digital Link URI (uncompressed; numeric AIs). Path: [custom prefix]/01/{gtin} then the
// GTIN key qualifiers in the dictionary's order (dlpkey=22,10,21|235); data attributes in the
// query (?17=261231&11=…). Non-numeric query keys (linkType, context …) are not UDI data and are
// ignored; numeric ones must be AIs we know.
// ---------------------------------------------------------------------------------------------

function decode(part: string): string {
  try {
    return decodeURIComponent(part)
  } catch {
    return fail('bad_format', `The web address in the code is damaged (bad % encoding). ${RESCAN}`)
  }
}

const NOT_A_UDI_LINK =
  'This code is a web address, not a UDI. Scan the other barcode on the label, or type the UDI from the label.'

function parseDigitalLink(uri: string, ctx: Ctx): UdiParse {
  const m = /^https?:\/\/([^/?#]+)(\/[^?#]*)?(?:\?([^#]*))?(?:#.*)?$/i.exec(uri)
  if (!m) return fail('unknown_format', NOT_A_UDI_LINK)
  const rawPath = m[2] ?? ''
  const segs = rawPath.split('/').slice(1)
  if (segs.length > 0 && segs[segs.length - 1] === '') segs.pop() // tolerate a trailing slash
  // The primary key may follow a custom path prefix; it must be found exactly once.
  const starts: number[] = []
  segs.forEach((seg, i) => {
    if (seg === '01' && /^(?:[0-9]{8}|[0-9]{12,14})$/.test(decode(segs[i + 1] ?? ''))) starts.push(i)
  })
  if (starts.length === 0) return fail('unknown_format', NOT_A_UDI_LINK)
  if (starts.length > 1) fail('bad_format', `The web address in the code has more than one GTIN. ${RESCAN}`)
  const start = starts[0] ?? 0
  const pairs: Array<readonly [string, string]> = []
  // GTIN-8/12/13 are left-padded with zeros to 14 digits (standards.md A1.1).
  pairs.push(['01', decode(segs[start + 1] ?? '').padStart(14, '0')])
  const qualifierOrder = ['22', '10', '21']
  let nextQualifier = 0
  let sawTpx = false
  for (let i = start + 2; i < segs.length; i += 2) {
    const key = segs[i] ?? ''
    const val = segs[i + 1]
    const at = qualifierOrder.indexOf(key, nextQualifier)
    if (key === '235' && nextQualifier === 0 && !sawTpx) {
      sawTpx = true
      nextQualifier = qualifierOrder.length
    } else if (at >= 0 && !sawTpx) {
      nextQualifier = at + 1
    } else {
      fail('bad_format', `The web address in the code has parts a GS1 Digital Link does not allow there. ${RESCAN}`)
    }
    if (val === undefined || val === '') fail('truncated', `The ${aiName(key)} in the web address is missing. ${RESCAN}`)
    pairs.push([key, decode(val)])
  }
  const query = m[3]
  if (query) {
    for (const kv of query.split('&')) {
      if (kv === '') continue
      const eq = kv.indexOf('=')
      const key = decode(eq < 0 ? kv : kv.slice(0, eq))
      if (!isDigits(key)) continue
      if (!AI_TABLE.has(key)) fail('unknown_ai', unknownAiMessage(key))
      const val = eq < 0 ? '' : decode(kv.slice(eq + 1))
      if (val === '') fail('truncated', `The ${aiName(key)} in the web address is empty. ${RESCAN}`)
      pairs.push([key, val])
    }
  }
  return gs1Result(pairs, ctx)
}

// ---------------------------------------------------------------------------------------------
// HIBC (ANSI/HIBC 2.6 via standards.md A2)
// ---------------------------------------------------------------------------------------------

type UdiOk = Extract<UdiParse, { ok: true }>

const HIBC_RESCAN = 'Rescan, or type the code from the label.'

function hibcFormat(detail: string): never {
  return fail('bad_format', `The HIBC code does not follow the HIBC layout (${detail}). ${HIBC_RESCAN}`)
}

/** `sym` starts with '+' and ends with the check character; no '*' and no AIM prefix. */
function parseHibc(sym: string): UdiParse {
  if (sym.length < 3) fail('truncated', `The HIBC code seems cut short. ${HIBC_RESCAN}`)
  for (const ch of sym) {
    if (HIBC_SET.indexOf(ch) < 0) {
      fail(
        'bad_character',
        /[a-z]/.test(ch)
          ? `The HIBC code contains a small letter ("${ch}"); HIBC uses capital letters only. ${HIBC_RESCAN}`
          : `The HIBC code contains ${describeChar(ch)}, which HIBC does not use. ${HIBC_RESCAN}`,
      )
    }
  }
  const data = sym.slice(0, -1)
  const check = sym.slice(-1)
  if (hibcCheckChar(data) !== check) {
    fail('bad_check_character', 'The HIBC check character does not match — rescan or type the code from the label.')
  }
  const out: UdiOk = { ok: true, issuer: 'HIBCC', fields: { symbol: sym, check } }
  const first = data.charAt(1)
  if (/[A-Z]/.test(first)) {
    // A primary has a letter after '+' (ANSI/HIBC 2.6 §2.2.1 Note 1 via standards.md A2.2).
    const parts = data.slice(1).split('/')
    parsePrimary(parts[0] ?? '', out)
    if (parts.length > 1) {
      // Combined: primary without check, '/', secondary without '+' and link, one check (A2.3).
      let k = 1
      const second = parts[1] ?? ''
      if (second.startsWith('$') || /^[0-9]{5}/.test(second)) {
        parseSecondary(second, out)
        k = 2
      }
      for (; k < parts.length; k++) parseSupplement(parts[k] ?? '', out)
    }
  } else if (/[0-9$]/.test(first)) {
    // Standalone secondary: '+', data, link character (= primary's check), check (A2.2).
    if (data.length < 3) fail('truncated', `The HIBC code seems cut short. ${HIBC_RESCAN}`)
    const content = data.slice(1, -1)
    if (content.includes('/')) hibcFormat('a "/" in a secondary code')
    out.fields.link = data.slice(-1)
    parseSecondary(content, out)
  } else {
    hibcFormat('it must start with + and a letter, a digit or $')
  }
  return out
}

/** LIC (letter + 3 alphanumerics), product number (1–18 A–Z/0–9), unit of measure (digit). */
function parsePrimary(body: string, out: UdiOk): void {
  if (body.length < 6) hibcFormat('the product part is too short')
  if (!/^[A-Z][A-Z0-9]{3}$/.test(body.slice(0, 4))) hibcFormat('the labeler code must be a letter and 3 letters or digits')
  const um = body.slice(-1)
  if (!/^[0-9]$/.test(um)) hibcFormat('the unit of measure must be a digit')
  const pcn = body.slice(4, -1)
  if (!/^[A-Z0-9]+$/.test(pcn)) hibcFormat('the product number may only have capital letters and digits')
  if (pcn.length > 18) fail('too_long', `The HIBC product number is longer than allowed (18 characters). ${HIBC_RESCAN}`)
  out.di = body
  out.fields.lic = body.slice(0, 4)
  out.fields.pcn = pcn
  out.fields.um = um
}

/**
 * Secondary data (BWIPP wiki "HIBC Data Structures"; ANSI/HIBC 2.6 App. E via standards.md A2.2):
 * "$" lot, "$+" serial, "$$"+flag lot, "$$+"+flag serial, or legacy 5-digit YYJJJ + lot.
 * Flags: 0/1 = first digit of MMYY; 2 MMDDYY; 3 YYMMDD; 4 YYMMDDHH; 5 YYJJJ; 6 YYJJJHH; 7 none;
 * 8 two-digit quantity; 9 five-digit quantity, each optionally followed by a date flag.
 * Judgement (not in the sources seen): after a quantity, a digit is read as a date flag, so a
 * lot starting with a digit there needs the "7" flag; otherwise the split would be a guess.
 */
function parseSecondary(content: string, out: UdiOk): void {
  let isSerial = false
  let rest: string
  let maxLen = 18
  if (content.startsWith('$$')) {
    isSerial = content.charAt(2) === '+'
    rest = content.slice(isSerial ? 3 : 2)
    const flag = rest.charAt(0)
    if (flag === '8' || flag === '9') {
      const n = flag === '8' ? 2 : 5
      const qty = rest.slice(1, 1 + n)
      if (qty.length < n) fail('truncated', `The HIBC quantity is incomplete. ${HIBC_RESCAN}`)
      if (!isDigits(qty)) hibcFormat('the quantity must be digits')
      out.fields.quantity = qty
      rest = rest.slice(1 + n)
      if (/^[0-9]/.test(rest)) {
        if (rest.startsWith('8') || rest.startsWith('9')) hibcFormat('two quantities')
        rest = readHibcDate(rest, out)
      }
    } else if (/^[0-7]$/.test(flag)) {
      rest = readHibcDate(rest, out)
    } else {
      hibcFormat('a date or quantity flag must follow $$')
    }
    if (rest === '' && out.fields.expiryRaw === undefined && out.fields.quantity === undefined) {
      hibcFormat('no lot, serial or date')
    }
  } else if (content.startsWith('$')) {
    isSerial = content.charAt(1) === '+'
    rest = content.slice(isSerial ? 2 : 1)
    if (rest === '') hibcFormat('the lot or serial number is empty')
  } else if (/^[0-9]{5}/.test(content)) {
    // Legacy: Julian expiry date then a lot of up to 13 characters.
    setHibcDate(content.slice(0, 5), 'YYJJJ', out)
    rest = content.slice(5)
    maxLen = 13
  } else {
    return hibcFormat('the secondary part must start with $ or a 5-digit date')
  }
  if (rest.length > maxLen) {
    fail('too_long', `The HIBC ${isSerial ? 'serial' : 'lot'} number is longer than allowed (${maxLen} characters). ${HIBC_RESCAN}`)
  }
  if (rest !== '') {
    if (isSerial) {
      out.serial = rest
      out.fields.serial = rest
    } else {
      out.lot = rest
      out.fields.lot = rest
    }
  }
}

const HIBC_DATE_FORMATS: Readonly<Record<string, { name: string; len: number }>> = {
  '2': { name: 'MMDDYY', len: 6 },
  '3': { name: 'YYMMDD', len: 6 },
  '4': { name: 'YYMMDDHH', len: 8 },
  '5': { name: 'YYJJJ', len: 5 },
  '6': { name: 'YYJJJHH', len: 7 },
}

/** Reads a date flag and its date from the start of `s`; returns what follows. */
function readHibcDate(s: string, out: UdiOk): string {
  const flag = s.charAt(0)
  if (flag === '7') return s.slice(1)
  if (flag === '0' || flag === '1') {
    // The flag digit is itself the first digit of MMYY (ANSI/HIBC 2.6 App. E1.1).
    if (s.length < 4) fail('truncated', `The HIBC expiry date is incomplete. ${HIBC_RESCAN}`)
    setHibcDate(s.slice(0, 4), 'MMYY', out)
    return s.slice(4)
  }
  const f = HIBC_DATE_FORMATS[flag]
  if (!f) return hibcFormat('unknown date flag')
  const raw = s.slice(1, 1 + f.len)
  if (raw.length < f.len) fail('truncated', `The HIBC expiry date is incomplete. ${HIBC_RESCAN}`)
  setHibcDate(raw, f.name, out)
  return s.slice(1 + f.len)
}

/**
 * HIBC two-digit years are read as 20YY (from memory, standards.md A2.2 [L]). MMYY has no day:
 * read as the last day of the month (judgement, standards.md A2.2 [L]), as GS1 does for DD=00.
 * Hours (GMT) are kept in fields.expiryHour; the expiry itself is a date.
 */
function setHibcDate(raw: string, format: string, out: UdiOk): void {
  const bad = (): never =>
    fail('bad_date', `The expiry date in the HIBC code is not a real date (${raw}). Rescan, or type the date from the label.`)
  if (!isDigits(raw)) bad()
  const n = (a: number, b: number): number => Number(raw.slice(a, b))
  let y: number
  let m: number
  let d: number
  let hour: number | undefined
  switch (format) {
    case 'MMYY':
      m = n(0, 2)
      y = 2000 + n(2, 4)
      d = m >= 1 && m <= 12 ? daysInMonth(y, m) : 0
      break
    case 'MMDDYY':
      m = n(0, 2)
      d = n(2, 4)
      y = 2000 + n(4, 6)
      break
    case 'YYMMDD':
    case 'YYMMDDHH':
      y = 2000 + n(0, 2)
      m = n(2, 4)
      d = n(4, 6)
      if (format === 'YYMMDDHH') hour = n(6, 8)
      break
    default: {
      // YYJJJ / YYJJJHH
      y = 2000 + n(0, 2)
      const jjj = n(2, 5)
      if (format === 'YYJJJHH') hour = n(5, 7)
      if (jjj < 1 || jjj > (isLeap(y) ? 366 : 365)) bad()
      m = 1
      d = jjj
      while (d > daysInMonth(y, m)) d -= daysInMonth(y, m++)
    }
  }
  if (m < 1 || m > 12 || d < 1 || d > daysInMonth(y, m)) bad()
  if (hour !== undefined && hour > 23) bad()
  const expiry = iso(y, m, d)
  if (out.expiry !== undefined && out.expiry !== expiry) {
    fail('conflicting_ai', 'The HIBC code gives two different expiry dates. Do not rely on it; type the code from the label.')
  }
  out.expiry = expiry
  out.fields.expiryRaw = raw
  out.fields.expiryFormat = format
  if (hour !== undefined) out.fields.expiryHour = pad(hour, 2)
}

/**
 * Supplementary data after further '/' in a combined symbol. Read: "16D" YYYYMMDD manufacture
 * date, "14D" YYYYMMDD expiry, "S" serial (ANSI MH10.8.2 data identifiers, from memory,
 * standards.md A2.3 [L]). Anything else is refused: a part we cannot name might be the lot or
 * serial in a form we do not know, and reporting "no lot" would be a guess.
 */
function parseSupplement(seg: string, out: UdiOk): void {
  if (seg === '') hibcFormat('an empty part between "/"')
  const date = /^(1[46])D([0-9]{8})$/.exec(seg)
  if (date) {
    const raw = date[2] ?? ''
    const y = Number(raw.slice(0, 4))
    const m = Number(raw.slice(4, 6))
    const d = Number(raw.slice(6, 8))
    if (m < 1 || m > 12 || d < 1 || d > daysInMonth(y, m)) {
      fail('bad_date', `A date in the HIBC code is not a real date (${raw}). Rescan, or type the date from the label.`)
    }
    const value = iso(y, m, d)
    if (date[1] === '16') {
      out.manufactured = value
      out.fields.manufacturedRaw = raw
    } else {
      if (out.expiry !== undefined) {
        // Same date given twice is harmless; keep the secondary's own raw fields.
        if (out.expiry !== value) {
          fail('conflicting_ai', 'The HIBC code gives two different expiry dates. Do not rely on it; type the code from the label.')
        }
        return
      }
      out.expiry = value
      out.fields.expiryRaw = raw
      out.fields.expiryFormat = 'YYYYMMDD'
    }
    return
  }
  if (seg.startsWith('S') && seg.length > 1) {
    const serial = seg.slice(1)
    if (serial.length > 18) fail('too_long', `The HIBC serial number is longer than allowed (18 characters). ${HIBC_RESCAN}`)
    if (out.serial !== undefined && out.serial !== serial) {
      fail('conflicting_ai', 'The HIBC code gives two different serial numbers. Do not rely on it; type the code from the label.')
    }
    out.serial = serial
    out.fields.serial = serial
    return
  }
  hibcFormat('a part after "/" that this app does not know')
}

// ---------------------------------------------------------------------------------------------
// Entry point
// ---------------------------------------------------------------------------------------------

/** AIM symbology identifiers (ISO/IEC 15424; standards.md A1.7, A2.5). */
const AIM_GS1 = new Set([']d2', ']C1', ']Q3', ']e0', ']J1'])
const AIM_PLAIN = new Set([']A0', ']C0', ']d1', ']Q1'])

function todayYear(today: string | undefined): number {
  if (today === undefined) return new Date().getFullYear()
  const m = typeof today === 'string' ? /^([0-9]{4})-([0-9]{2})-([0-9]{2})$/.exec(today) : null
  const y = Number(m?.[1])
  const mo = Number(m?.[2])
  const d = Number(m?.[3])
  if (!m || mo < 1 || mo > 12 || d < 1 || d > daysInMonth(y, mo)) {
    fail('bad_option', 'The date used to read two-digit years is not valid (expected YYYY-MM-DD). Ask an administrator to check the setup.')
  }
  return y
}

function checkSubstitute(sub: string | undefined): void {
  if (sub === undefined) return
  const single = typeof sub === 'string' && [...sub].length === 1
  if (!single || isCset82Char(sub) || /\s/.test(sub) || sub === ']') {
    fail(
      'bad_option',
      'The scanner separator setting is not valid: it must be one character that never appears in UDI data, such as ~ or |. Ask an administrator to check Settings.',
    )
  }
}

/**
 * Parse one scan or one typed UDI. Never throws.
 * @param scan  exactly what the scanner sent or the person typed
 * @param opts  `today` (YYYY-MM-DD) for the GS1 century rule; `gsSubstitute` for wedge scanners
 */
export function parseUdi(scan: string, opts: ParseUdiOptions = {}): UdiParse {
  try {
    return parseOrFail(scan, opts ?? {})
  } catch (e) {
    if (e instanceof UdiFailure) return { ok: false, error: { code: e.code, message: e.message } }
    return {
      ok: false,
      error: {
        code: 'internal',
        message: 'Something went wrong reading this code. Type the UDI from the label, and tell the support team.',
      },
    }
  }
}

function parseOrFail(scan: unknown, opts: ParseUdiOptions): UdiParse {
  const ctx: Ctx = { year: todayYear(opts.today) }
  checkSubstitute(opts.gsSubstitute)
  if (typeof scan !== 'string') return fail('empty', 'Nothing was read. Scan the code again.')
  if (scan.length > MAX_INPUT) fail('too_long', `This is far longer than any UDI. ${RESCAN}`)
  // Scanners add CR/LF/TAB; people add spaces. A trailing space could also be an HIBC check
  // character, so the untrimmed end is kept aside for that case.
  const lead = scan.replace(/^\s+/, '')
  const trimmed = lead.replace(/\s+$/, '')
  if (trimmed === '') fail('empty', 'Nothing was read. Scan the code again.')

  let aim = ''
  let body = trimmed
  if (body.startsWith(']')) {
    aim = body.slice(0, 3)
    if (!AIM_GS1.has(aim) && !AIM_PLAIN.has(aim)) {
      fail('unknown_format', 'This barcode type does not carry a UDI. Scan the UDI barcode on the label, or type the UDI from the label.')
    }
    body = body.slice(3)
    if (body === '') fail('empty', 'Nothing was read. Scan the code again.')
  }
  const gs1Aim = AIM_GS1.has(aim)
  const plainAim = AIM_PLAIN.has(aim)
  const wrongKind = (): never =>
    fail(
      'unknown_format',
      'This barcode is not in a UDI format we can read (the scanner reports a different barcode type). Scan the other barcode on the label, or type the UDI from the label.',
    )

  if (/^https?:\/\//i.test(body)) {
    if (gs1Aim) wrongKind()
    return parseDigitalLink(body, ctx)
  }
  if (body.startsWith('(')) {
    if (aim) wrongKind()
    return parseHri(body, ctx)
  }
  if (body.startsWith('+') || body.startsWith('*+')) {
    if (gs1Aim) wrongKind()
    // Only a single trailing space after the data (scanner terminators aside) can be a check char.
    return parseHibcInput(body, lead.replace(/[\r\n\t\f\v]+$/, '') === trimmed + ' ')
  }
  if (plainAim) wrongKind()

  // GS1 element string: map the facility's substitute and RS (trade.md §7.3) to GS.
  let es = body
  if (opts.gsSubstitute !== undefined) es = es.split(opts.gsSubstitute).join(GS)
  es = es.split(RS).join(GS)
  // FNC1 in first position: zxing's DataMatrix reports it as a leading GS (standards.md Part B).
  const leadingFnc1 = es.startsWith(GS)
  if (leadingFnc1) es = es.slice(1)
  if (es === '') fail('empty', 'Nothing was read. Scan the code again.')
  // Without a GS1 marker, only digits can start an element string; anything else is not ours.
  if (!/^[0-9]/.test(es) && !gs1Aim && !leadingFnc1) {
    fail('unknown_format', 'This is not a UDI code we can read. Scan the UDI barcode on the label (often the square one), or type the UDI from the label.')
  }
  // A GTIN on its own (a retail EAN/UPC barcode, or a GTIN typed without "(01)") can never be a
  // complete element string; say what it is instead of reporting an unknown field.
  if (!aim && !leadingFnc1 && isValidGtin(es)) {
    fail(
      'unknown_format',
      'This is a product number (GTIN) on its own, without lot or expiry. Scan the UDI barcode on the label (often the square one), or type the whole UDI with its brackets: (01) and the GTIN, (17) and the expiry, (10) and the lot.',
    )
  }
  return parseElementString(es, ctx)
}

/**
 * HIBC input: strips a Code 39 '*…*' pair and reads a final '_' as the space check character
 * (Code 39 HRI prints a space check as '_', HIBCC terms page via standards.md A2.4). If the
 * input ended in exactly one space, that space may be the check character: both readings are
 * tried and only an unambiguous success is accepted.
 */
function parseHibcInput(body: string, maybeSpaceCheck: boolean): UdiParse {
  let sym = body.length >= 2 && body.startsWith('*') && body.endsWith('*') ? body.slice(1, -1) : body
  if (sym.endsWith('_')) sym = sym.slice(0, -1) + ' '
  const plain = attempt(() => parseHibc(sym))
  if (!maybeSpaceCheck || body.startsWith('*')) return rethrow(plain)
  const spaced = attempt(() => parseHibc(body + ' '))
  if (spaced.ok && plain.ok) {
    fail('bad_format', `The HIBC code ends in a space that may or may not belong to it. ${HIBC_RESCAN}`)
  }
  return rethrow(spaced.ok ? spaced : plain)
}

function attempt(fn: () => UdiParse): UdiParse {
  try {
    return fn()
  } catch (e) {
    if (e instanceof UdiFailure) return { ok: false, error: { code: e.code, message: e.message } }
    throw e
  }
}

function rethrow(p: UdiParse): UdiParse {
  if (!p.ok) fail(p.error.code, p.error.message)
  return p
}

// ---------------------------------------------------------------------------------------------
// HRI output
// ---------------------------------------------------------------------------------------------

/**
 * Human-readable form of a successful parse: GS1 as "(01)…(17)…(10)…(21)…" (fixed-length fields
 * first, lot and serial last, as on labels and in FHIR carrierHRF); HIBC as its data string.
 * Returns '' for a failed parse. A lot or serial that itself contains "(" + 2–4 digits + ")"
 * has no unambiguous HRI; parseUdi will not read such a string back (see parseHri).
 */
export function toHri(parse: UdiParse): string {
  if (!parse.ok) return ''
  if (parse.issuer === 'HIBCC') return parse.fields.symbol ?? ''
  return Object.keys(parse.fields)
    .map(hriOrder)
    .sort((a, b) => a[0] - b[0] || (a[1] < b[1] ? -1 : a[1] > b[1] ? 1 : 0))
    .map(([, ai]) => `(${ai})${parse.fields[ai]}`)
    .join('')
}
