/**
 * Property tests for parseUdi (fast-check).
 *
 * 1. Robustness: 10,000 random and mutated inputs. parseUdi never throws; every failure has a
 *    known, non-internal code and a message; every success carries a GTIN whose check digit is
 *    right (checked by the `gtin` package and by a separate implementation here) or an HIBC
 *    symbol whose mod-43 check character is right (checked against the A2.4 value table here).
 * 2. Faithfulness: generated valid AI sets, written as a GS-separated element string, as the
 *    human-readable form and as a Digital Link, all parse back to the generated values.
 *
 * Sources: standards.md A1.2 (CSET 82), A1.4 (separators), A1.5 (mod 10), A1.6 (dates and the
 * century check values for today = 2026), A2.4 (mod-43 table). Expected values are computed
 * here independently of the parser (marked "computed").
 */
import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { isValid as gtinPackageIsValid } from 'gtin'
import { UDI_ERROR_CODES, parseUdi, toHri, type ParseUdiOptions, type UdiParse } from '../../../../shared/utils/udi'

const GS = '\u001D'
const RS = '\u001E'
const TODAY = '2026-06-15'

// --- independent reference implementations (not the parser's code) ------------------------------

/** A1.5: weights 3,1 from the right of the data digits. */
function refCheckDigit(data: string): number {
  const digits = data.split('').reverse().map(Number)
  const sum = digits.reduce((s, d, i) => s + d * (i % 2 === 0 ? 3 : 1), 0)
  return (10 - (sum % 10)) % 10
}

/** A2.4 value table, written out. */
const MOD43: Record<string, number> = {}
'0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ'.split('').forEach((c, i) => (MOD43[c] = i))
Object.assign(MOD43, { '-': 36, '.': 37, ' ': 38, $: 39, '/': 40, '+': 41, '%': 42 })
function refHibcValid(symbol: string): boolean {
  const chars = symbol.split('')
  if (chars.some((c) => MOD43[c] === undefined)) return false
  const sum = chars.slice(0, -1).reduce((s, c) => s + (MOD43[c] ?? 0), 0)
  return MOD43[chars[chars.length - 1] ?? ''] === sum % 43
}

function gtinSecondOpinion(g: string): boolean {
  try {
    return gtinPackageIsValid(g) // throws on bad formats (standards.md Part B)
  } catch {
    return false
  }
}

const isRealIsoDate = (s: string): boolean => {
  const d = new Date(`${s}T00:00:00Z`)
  return /^\d{4}-\d{2}-\d{2}$/.test(s) && !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === s
}

/** The invariants every result must satisfy. */
function assertWellFormed(input: string, opts: ParseUdiOptions): void {
  let r: UdiParse
  try {
    r = parseUdi(input, opts)
  } catch (e) {
    throw new Error(`parseUdi threw on ${JSON.stringify(input)}: ${String(e)}`)
  }
  if (!r.ok) {
    expect(UDI_ERROR_CODES).toContain(r.error.code)
    expect(r.error.code).not.toBe('internal')
    expect(typeof r.error.message).toBe('string')
    expect(r.error.message.length).toBeGreaterThan(0)
    return
  }
  if (r.expiry !== undefined) expect(isRealIsoDate(r.expiry)).toBe(true)
  if (r.manufactured !== undefined) expect(isRealIsoDate(r.manufactured)).toBe(true)
  if (r.issuer === 'GS1') {
    const g = r.gtin ?? ''
    expect(g).toMatch(/^[0-9]{14}$/)
    expect(refCheckDigit(g.slice(0, 13))).toBe(Number(g[13]))
    expect(gtinSecondOpinion(g)).toBe(true)
    expect(r.di).toBe(g)
    expect(r.fields['01']).toBe(g)
    for (const v of [r.lot, r.serial]) if (v !== undefined) expect(v).toMatch(/^[!"%&'()*+,\-./0-9:;<=>?A-Z_a-z]{1,20}$/)
  } else {
    expect(r.issuer).toBe('HIBCC')
    expect(refHibcValid(r.fields.symbol ?? '')).toBe(true)
  }
}

// --- inputs -------------------------------------------------------------------------------------

/** Valid scans in every accepted shape (sources in udi.test.ts). */
const VALID_SCANS = [
  ']d20109506000134352' + '17261231' + '10ABC123' + GS + '21SN0001', // A1.4 example 1
  GS + '0109506000134352' + '10ABC123' + GS + '17261231', // A1.4 example 2, zxing DataMatrix form
  ']C1010950600013435270032612311530' + GS + '240REF-9' + GS + '305' + GS + '10L1', // A1.4 example 3
  '01034531200000111719112510ABCD1234' + RS + '2110', // trade.md §7.3
  '0109521234500001' + '11250115' + '10abc-xyz_1', // invented
  '(01)09501101530003(17)250101(10)ABC123', // trade.md §7.3
  '(01)09506000134352(17)261200(10)L-1/2(21)S.3', // A1.6 DD=00
  'https://id.example.org/01/09506000134352/10/ABC%2F1/21/S1?17=261231', // Digital Link
  '+A123BJC5D6E71G', // A2.4
  '+A99912345/$$52001510X33', // A2.3
  '+$$52001510X3GD', // A2.2
  '+A123BJC5D6E71/$$3261231LOT123H', // A2.4
  '+$$+3261231SN0001GV', // A2.4
  '*+A123BJC5D6E71G*', // A2.4 Code 39 HRI
  ']A0+A999ABC1230V', // A2.1 with AIM identifier
  '+A999ABC490 ', // computed: space check character
]

/** Characters that matter to the parser, so random strings hit interesting paths. */
const INTERESTING = [
  ...'0123456789',
  ...'0123456789', // weight digits up
  GS,
  RS,
  '~',
  ...'()+$/*]_%?&=:.-',
  ...'ABCDGHLSVXdQCe',
  ' ',
  '\r',
  '\u00e9',
  '\u200b',
]
const interestingChar = fc.constantFrom(...INTERESTING)
const anyChar = fc.oneof(interestingChar, fc.string({ unit: 'binary', minLength: 1, maxLength: 1 }))

const PREFIXES = ['', ']d2', ']C1', ']Q3', ']d1', ']A0', GS, '(01)', '+', '+$$', '*+', 'https://x.example/01/', '0109506000134352']

type Op =
  | { t: 'drop'; at: number }
  | { t: 'insert'; at: number; ch: string }
  | { t: 'replace'; at: number; ch: string }
  | { t: 'truncate'; at: number }
  | { t: 'gs'; at: number }

const opArb: fc.Arbitrary<Op> = fc.oneof(
  fc.record({ t: fc.constant('drop' as const), at: fc.nat() }),
  fc.record({ t: fc.constant('insert' as const), at: fc.nat(), ch: anyChar }),
  fc.record({ t: fc.constant('replace' as const), at: fc.nat(), ch: anyChar }),
  fc.record({ t: fc.constant('truncate' as const), at: fc.nat() }),
  fc.record({ t: fc.constant('gs' as const), at: fc.nat() }),
)

function mutate(s: string, ops: Op[]): string {
  let out = s
  for (const op of ops) {
    const at = op.at % (out.length + 1)
    switch (op.t) {
      case 'drop':
        out = out.slice(0, at) + out.slice(at + 1)
        break
      case 'insert':
        out = out.slice(0, at) + op.ch + out.slice(at)
        break
      case 'replace':
        out = out.slice(0, at) + op.ch + out.slice(at + 1)
        break
      case 'truncate':
        out = out.slice(0, at)
        break
      case 'gs':
        out = out.slice(0, at) + GS + out.slice(at)
        break
    }
  }
  return out
}

const optsArb: fc.Arbitrary<ParseUdiOptions> = fc.constantFrom<ParseUdiOptions>(
  { today: TODAY },
  { today: TODAY, gsSubstitute: '~' },
  { today: '2080-01-01' },
  {},
)

const randomInput = fc.oneof(
  fc.string({ unit: 'binary', maxLength: 80 }),
  fc.string({ unit: interestingChar, maxLength: 80 }),
  fc.tuple(fc.constantFrom(...PREFIXES), fc.string({ unit: interestingChar, maxLength: 60 })).map(([p, s]) => p + s),
)
const mutatedInput = fc
  .tuple(fc.constantFrom(...VALID_SCANS), fc.array(opArb, { minLength: 1, maxLength: 4 }))
  .map(([s, ops]) => mutate(s, ops))

describe('robustness (10,000 inputs in total)', () => {
  it('the valid seeds themselves parse', () => {
    for (const s of VALID_SCANS) expect(parseUdi(s, { today: TODAY }).ok, JSON.stringify(s)).toBe(true)
  })

  it('4,000 random strings', () => {
    fc.assert(fc.property(randomInput, optsArb, (s, o) => assertWellFormed(s, o)), { numRuns: 4000 })
  })

  it('5,000 mutations of valid scans (drop, insert, replace, truncate, GS insertion)', () => {
    fc.assert(fc.property(mutatedInput, optsArb, (s, o) => assertWellFormed(s, o)), { numRuns: 5000 })
  })

  it('1,000 GS insertions and truncations only', () => {
    const gsOnly = fc
      .tuple(
        fc.constantFrom(...VALID_SCANS),
        fc.array(
          fc.oneof(
            fc.record({ t: fc.constant('gs' as const), at: fc.nat() }),
            fc.record({ t: fc.constant('truncate' as const), at: fc.nat() }),
          ),
          { minLength: 1, maxLength: 3 },
        ),
      )
      .map(([s, ops]) => mutate(s, ops))
    fc.assert(fc.property(gsOnly, (s) => assertWellFormed(s, { today: TODAY })), { numRuns: 1000 })
  })
})

// --- valid AI sets ------------------------------------------------------------------------------

const CSET82 = "!\"%&'()*+,-./0123456789:;<=>?ABCDEFGHIJKLMNOPQRSTUVWXYZ_abcdefghijklmnopqrstuvwxyz" // A1.2
const digit = fc.constantFrom(...'0123456789')
const gtinArb = fc.string({ unit: digit, minLength: 13, maxLength: 13 }).map((d) => d + String(refCheckDigit(d))) // computed
const cset82 = (max: number) => fc.string({ unit: fc.constantFrom(...CSET82), minLength: 1, maxLength: max })

/** A1.6 with today = 2026: YY 00–76 → 20YY, 77–99 → 19YY (check values 76→2076, 77→1977). */
const dateArb = fc
  .record({ yy: fc.integer({ min: 0, max: 99 }), mm: fc.integer({ min: 1, max: 12 }), dd: fc.integer({ min: 0, max: 31 }) })
  .map(({ yy, mm, dd }) => {
    const year = yy <= 76 ? 2000 + yy : 1900 + yy
    const last = new Date(Date.UTC(year, mm, 0)).getUTCDate() // computed: last day of the month
    return { yy, mm, dd, year, last }
  })
  .filter(({ dd, last }) => dd <= last)
  .map(({ yy, mm, dd, year, last }) => ({
    raw: [yy, mm, dd].map((n) => String(n).padStart(2, '0')).join(''),
    iso: `${year}-${String(mm).padStart(2, '0')}-${String(dd === 0 ? last : dd).padStart(2, '0')}`, // DD=00 → last day (A1.6)
  }))

/** A lot typed in the HRI cannot contain "(NN)" (it would read as a new field), see udi.ts. */
const hriSafe = (s: string): boolean => !/\([0-9]{2,4}\)/.test(s)

const aiSetArb = fc.record({
  gtin: gtinArb,
  lot: fc.option(cset82(20).filter(hriSafe), { nil: undefined }),
  serial: fc.option(cset82(20).filter(hriSafe), { nil: undefined }),
  expiry: fc.option(dateArb, { nil: undefined }),
  made: fc.option(dateArb, { nil: undefined }),
  extra: fc.option(cset82(30).filter(hriSafe), { nil: undefined }), // (240) additional product ID
  order: fc.array(fc.integer(), { minLength: 6, maxLength: 6 }),
  superfluous: fc.array(fc.boolean(), { minLength: 6, maxLength: 6 }),
  prefix: fc.constantFrom('', ']d2', ']C1', ']Q3', GS),
})

type AiSet = typeof aiSetArb extends fc.Arbitrary<infer T> ? T : never

function elements(set: AiSet): Array<[string, string]> {
  const els: Array<[string, string]> = [['01', set.gtin]]
  if (set.made) els.push(['11', set.made.raw])
  if (set.expiry) els.push(['17', set.expiry.raw])
  if (set.lot !== undefined) els.push(['10', set.lot])
  if (set.serial !== undefined) els.push(['21', set.serial])
  if (set.extra !== undefined) els.push(['240', set.extra])
  // Random order: the standard allows any order (A1.4 rule 6 is only advice).
  return els
    .map((e, i) => ({ e, k: set.order[i] ?? 0 }))
    .sort((a, b) => a.k - b.k)
    .map(({ e }) => e)
}

const FIXED = new Set(['01', '11', '17']) // A1.3: predefined length by first two digits

function elementString(set: AiSet): string {
  const els = elements(set)
  let s = set.prefix
  els.forEach(([ai, v], i) => {
    s += ai + v
    const last = i === els.length - 1
    // A1.4 rule 2: GS after a variable field unless last; rule 4: one superfluous GS is fine.
    if ((!FIXED.has(ai) && !last) || set.superfluous[i]) s += GS
  })
  return s
}

const hri = (set: AiSet): string =>
  elements(set)
    .map(([ai, v]) => `(${ai})${v}`)
    .join('')

function digitalLink(set: AiSet): string {
  let path = `/01/${set.gtin}`
  if (set.lot !== undefined) path += `/10/${encodeURIComponent(set.lot)}`
  if (set.serial !== undefined) path += `/21/${encodeURIComponent(set.serial)}`
  const q: string[] = []
  if (set.expiry) q.push(`17=${set.expiry.raw}`)
  if (set.made) q.push(`11=${set.made.raw}`)
  if (set.extra !== undefined) q.push(`240=${encodeURIComponent(set.extra)}`)
  return `https://id.example.org${path}${q.length ? `?${q.join('&')}` : ''}`
}

function expectValues(r: UdiParse, set: AiSet, label: string): void {
  if (!r.ok) throw new Error(`${label}: ${r.error.code} ${r.error.message}`)
  expect(r.gtin).toBe(set.gtin)
  expect(r.lot).toBe(set.lot)
  expect(r.serial).toBe(set.serial)
  expect(r.expiry).toBe(set.expiry?.iso)
  expect(r.manufactured).toBe(set.made?.iso)
  expect(r.fields).toEqual(Object.fromEntries(elements(set)))
}

describe('valid AI sets parse back to the same values', () => {
  it('as GS-separated element string, HRI and Digital Link (2,000 sets)', () => {
    fc.assert(
      fc.property(aiSetArb, (set) => {
        const opts = { today: TODAY }
        const es = elementString(set)
        expectValues(parseUdi(es, opts), set, JSON.stringify(es))
        expectValues(parseUdi(hri(set), opts), set, hri(set))
        expectValues(parseUdi(digitalLink(set), opts), set, digitalLink(set))
        // toHri output is itself a valid input with the same content.
        expectValues(parseUdi(toHri(parseUdi(es, opts)), opts), set, 'toHri')
        // The same element string from a wedge scanner that sends "|" for GS.
        expectValues(parseUdi(es.split(GS).join('|'), { ...opts, gsSubstitute: '|' }), set, 'wedge |')
      }),
      { numRuns: 2000 },
    )
  })
})
