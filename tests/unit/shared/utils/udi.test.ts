/**
 * parseUdi against the standards' worked examples and check values.
 *
 * Sources are named beside every case. "A1.x"/"A2.x"/"Part B" are sections of the project's
 * standards fact sheet (shared/reference/standards.md), which quotes the primary sources;
 * "trade.md" is the trade-practice fact sheet. "computed" marks values worked out here (with
 * the check-character/check-digit helpers whose own check values are tested first).
 */
import { describe, expect, it } from 'vitest'
import { isValid as gtinPackageIsValid } from 'gtin'
import {
  UDI_ERROR_CODES,
  gs1FullYear,
  gtinCheckDigit,
  hibcCheckChar,
  isValidGtin,
  parseUdi,
  toHri,
  type UdiParse,
} from '../../../../shared/utils/udi'

const GS = '\u001D'
const RS = '\u001E'
const TODAY = { today: '2026-06-15' } // fixed clock: the century rule depends on the year

/** The `gtin` package throws on bad formats instead of returning false (Part B): wrap it. */
function secondOpinion(code: string): boolean {
  try {
    return gtinPackageIsValid(code)
  } catch {
    return false
  }
}

function ok(r: UdiParse): Extract<UdiParse, { ok: true }> {
  if (!r.ok) throw new Error(`expected ok, got ${r.error.code}: ${r.error.message}`)
  return r
}

function errCode(r: UdiParse): string {
  if (r.ok) throw new Error(`expected an error, got ${JSON.stringify(r)}`)
  return r.error.code
}

/** HIBC data + its mod-43 check character (computed with hibcCheckChar, itself tested below). */
const withCheck = (s: string): string => s + hibcCheckChar(s)

// ---------------------------------------------------------------------------------------------

describe('GTIN check digit (mod 10)', () => {
  it.each([
    ['629104150021', 3], // GS1 "How to calculate a check digit manually" via A1.5 (sum 57 → 3)
    ['890400021003', 7], // GS1 India check-digit page via A1.5 (63 → 70)
    ['730001100001', 7], // GS1 Sweden check-digit page via A1.5 (23 → 30)
    ['0950600013435', 2], // A1.5, computed: GS1 example GTIN 09506000134352
    ['0952123450000', 1], // A1.5, computed: invented GTIN on demo prefix 952
    ['1952123450000', 8], // A1.5, computed: same item, indicator 1
    ['590123412345', 7], // A1.5, computed
  ])('%s → %i', (data, check) => {
    expect(gtinCheckDigit(data)).toBe(check)
    const full = data + String(check)
    expect(isValidGtin(full)).toBe(true)
    expect(secondOpinion(full)).toBe(true) // gtin package as a second opinion (Part B)
  })

  it.each([
    ['09506000134353'], // A1.5 bad example: gtin.isValid → false, bwip-js GS1badChecksum
    ['09521234500002'], // computed: last digit changed from the valid 09521234500001
  ])('rejects %s, as the gtin package does', (code) => {
    expect(isValidGtin(code)).toBe(false)
    expect(secondOpinion(code)).toBe(false)
    expect(errCode(parseUdi(`01${code}`, TODAY))).toBe('bad_check_digit') // A1.1: (01) N14 with check digit
  })

  it('isValidGtin accepts GTIN-8/12/13/14 only and never throws', () => {
    expect(isValidGtin('95212340')).toBe(true) // computed GTIN-8 (check 0)
    expect(isValidGtin('952123450005')).toBe(true) // computed GTIN-12
    expect(isValidGtin('6291041500213')).toBe(true) // A1.5 GS1 page, GTIN-13
    expect(isValidGtin('0950600013435')).toBe(false) // 13 digits but wrong check (computed)
    expect(isValidGtin('9506000134352A')).toBe(false) // letters: format, computed
    expect(isValidGtin('')).toBe(false) // empty
    expect(isValidGtin(123 as unknown as string)).toBe(false) // not a string
  })

  it('gtinCheckDigit refuses non-digits (programming error, not a scan error)', () => {
    expect(() => gtinCheckDigit('12a')).toThrow(RangeError) // documented behaviour
  })
})

// ---------------------------------------------------------------------------------------------

describe('GS1 element strings (FNC1 as GS)', () => {
  // The three worked element strings of A1.4 (computed with bwip-js → PNG → zxing).
  it('A1.4 example 1: (01)(17)(10)(21) as a scanner sends it with ]d2', () => {
    const scan = `]d20109506000134352` + `17261231` + `10ABC123` + GS + `21SN0001` // A1.4 worked example 1
    const r = ok(parseUdi(scan, TODAY))
    expect(r).toMatchObject({
      issuer: 'GS1',
      gtin: '09506000134352',
      di: '09506000134352',
      lot: 'ABC123',
      serial: 'SN0001',
      expiry: '2026-12-31',
    })
    expect(r.fields).toEqual({ '01': '09506000134352', '17': '261231', '10': 'ABC123', '21': 'SN0001' })
  })

  it('A1.4 example 2: lot before expiry needs a GS after the lot', () => {
    const scan = `]d20109506000134352` + `10ABC123` + GS + `17261231` // A1.4 worked example 2
    expect(ok(parseUdi(scan, TODAY))).toMatchObject({ lot: 'ABC123', expiry: '2026-12-31' })
  })

  it('A1.4 example 3: (7003) is fixed-length but still needs a GS; (240), (30) kept in fields', () => {
    const scan = `]d20109506000134352` + `70032612311530` + GS + `240REF-9` + GS + `305` + GS + `10L1` // A1.4 worked example 3
    const r = ok(parseUdi(scan, TODAY))
    expect(r.lot).toBe('L1')
    expect(r.expiry).toBeUndefined() // (7003) stays in fields; expiry comes from (17) only (brief)
    expect(r.fields).toEqual({ '01': '09506000134352', '7003': '2612311530', '240': 'REF-9', '30': '5', '10': 'L1' })
  })

  it("accepts zxing's DataMatrix form: a leading GS instead of ]d2", () => {
    // Part B round-trip table: gs1datamatrix → "<GS>0109506000134352…"
    const scan = GS + '01095060001343521726123110ABC123' + GS + '21SN0001'
    expect(ok(parseUdi(scan, TODAY))).toMatchObject({ gtin: '09506000134352', serial: 'SN0001' })
  })

  it.each([
    [']C1010950600013435210ABC123' + GS + '17261231'], // Part B: gs1-128 with ASSUME_GS1
    [']Q3010950600013435210ABC123' + GS + '17261231'], // A1.7: ]Q3 GS1 QR
    [']e0010950600013435210ABC123' + GS + '17261231'], // A1.7: ]e0 GS1 DataBar
    [']J1010950600013435210ABC123' + GS + '17261231'], // A1.7 (biip list): ]J1 GS1 DotCode
    ['010950600013435210ABC123' + GS + '17261231'], // Part B: gs1qrcode via zxing, no identifier
    [']d2' + GS + '010950600013435210ABC123' + GS + '17261231'], // judgement: FNC1 echoed after ]d2
  ])('symbology identifiers: %j', (scan) => {
    expect(ok(parseUdi(scan, TODAY))).toMatchObject({ gtin: '09506000134352', lot: 'ABC123', expiry: '2026-12-31' })
  })

  it('trade.md §7.3: U+001E and U+001D both work as the separator', () => {
    const base = '01034531200000111719112510ABCD1234' // trade.md §7.3 ("gs1" Ruby library docs)
    for (const sep of [RS, GS]) {
      expect(ok(parseUdi(base + sep + '2110', TODAY))).toMatchObject({
        gtin: '03453120000011',
        expiry: '2019-11-25',
        lot: 'ABCD1234',
        serial: '10',
      })
    }
  })

  it('tolerates one superfluous separator after any element string (A1.4 rule 4)', () => {
    // GenSpecs §7.8.6.3 via A1.4 rule 4
    expect(ok(parseUdi('0109506000134352' + GS + '17261231' + GS + '10AB', TODAY)).lot).toBe('AB')
    expect(ok(parseUdi('010950600013435210AB' + GS, TODAY)).lot).toBe('AB') // trailing, same rule
    expect(errCode(parseUdi('0109506000134352' + GS + GS + '10AB', TODAY))).toBe('bad_format') // two: not tolerated
    expect(errCode(parseUdi(GS + GS + '0109506000134352', TODAY))).toBe('bad_format') // FNC1 + superfluous at start
  })

  it('without a separator a variable field runs to the end (A1.4 rule 2), so (17) becomes part of the lot', () => {
    // A1.4 rule 2 / Part B (Code 128 read without ASSUME_GS1 drops the GS): the standard gives
    // no way to tell, so the parser follows the rule; the roundtrip tests keep the hint on.
    expect(ok(parseUdi('010950600013435210ABC12317261231', TODAY)).lot).toBe('ABC12317261231')
  })

  it('keyboard-wedge substitute for GS (brief: opts.gsSubstitute)', () => {
    for (const sub of ['~', '|', '^', '#']) {
      // brief: facility-configured substitute; not CSET 82 (A1.2 lists ~ | ^ # as outside it)
      const scan = `${sub}0109506000134352${sub}10A-1${sub}21S.2`.replace(/^./, '') // no leading FNC1
      expect(ok(parseUdi(scan, { ...TODAY, gsSubstitute: sub }))).toMatchObject({ lot: 'A-1', serial: 'S.2' })
      expect(ok(parseUdi(sub + scan, { ...TODAY, gsSubstitute: sub })).lot).toBe('A-1') // leading FNC1 as substitute
    }
  })

  it.each([
    ['-'], // A1.2: in CSET 82, would split a lot like "A-1"
    ['a'], // A1.2: letters are data
    ['5'], // digits are data
    ['%'], // A1.2: in CSET 82
    [' '], // whitespace is trimmed by scanners' hosts (judgement)
    [']'], // starts an AIM identifier (A1.7)
    ['~~'], // brief: a single character
    [''], // brief: a single character
  ])('refuses gsSubstitute %j with bad_option', (sub) => {
    expect(errCode(parseUdi('0109506000134352', { gsSubstitute: sub }))).toBe('bad_option')
  })

  it('the substitute is only a separator when configured: "~" in data is a bad character', () => {
    expect(errCode(parseUdi('010950600013435210A~1', TODAY))).toBe('bad_character') // A1.2: ~ is not CSET 82
  })
})

// ---------------------------------------------------------------------------------------------

describe('GS1 field rules', () => {
  it.each([
    ['ABCDEFGHIJ1234567890', 'ok'], // A1.1: (10) X..20 — 20 characters is the maximum
    ['ABCDEFGHIJ1234567890X', 'too_long'], // A1.1 / Part B: bwip-js GS1valueTooLong for a 21-char lot
    ['abc-xyz_1', 'ok'], // A1.2: lower case and _ are CSET 82 (bwip-js accepts (10)abc-xyz_1)
    ["!\"%&'()*+,-./:;<=>?_", 'ok'], // A1.2: every CSET 82 punctuation character
    ['AB#C', 'bad_character'], // A1.2: bwip-js GS1badCSET82character for (10)AB#C
    ['SN 1', 'bad_character'], // A1.2: space is not CSET 82
    ['L\u00e91', 'bad_character'], // A1.2: nothing above 0x7F
  ])('lot %j → %s', (lot, expected) => {
    const r = parseUdi('0109506000134352' + '10' + lot, TODAY)
    if (expected === 'ok') expect(ok(r).lot).toBe(lot)
    else expect(errCode(r)).toBe(expected)
  })

  it('serial max 20 (A1.1: (21) X..20)', () => {
    expect(ok(parseUdi('010950600013435221' + 'S'.repeat(20), TODAY)).serial).toBe('S'.repeat(20)) // A1.1
    expect(errCode(parseUdi('010950600013435221' + 'S'.repeat(21), TODAY))).toBe('too_long') // A1.1
  })

  it('(240)/(241) X..30, (30) N..8 (A1.1)', () => {
    expect(ok(parseUdi('0109506000134352240' + 'R'.repeat(30), TODAY)).fields['240']).toHaveLength(30) // A1.1
    expect(errCode(parseUdi('0109506000134352241' + 'R'.repeat(31), TODAY))).toBe('too_long') // A1.1
    expect(ok(parseUdi('010950600013435230' + '12345678', TODAY)).fields['30']).toBe('12345678') // A1.1
    expect(errCode(parseUdi('010950600013435230' + '123456789', TODAY))).toBe('too_long') // A1.1
    expect(errCode(parseUdi('010950600013435230' + '12A', TODAY))).toBe('bad_character') // A1.1: N only
  })

  it('(10)/(17)/(21) need (01) (A1.1 "must go with"; Part B: bwip-js GS1missingAIs)', () => {
    expect(errCode(parseUdi('10ABC123', TODAY))).toBe('missing_gtin') // A1.1 / Part B
    expect(errCode(parseUdi('(17)261231(21)X', TODAY))).toBe('missing_gtin') // A1.1
    expect(errCode(parseUdi('00095012345678901237', TODAY))).toBe('missing_gtin') // computed SSCC (check 7) alone: not a product
  })

  it('(250) needs (21), (7004) needs (10) (GS1 Barcode Syntax Dictionary req=)', () => {
    expect(errCode(parseUdi('(01)09506000134352(250)X1', TODAY))).toBe('missing_ai') // dictionary 250 req=21
    expect(ok(parseUdi('(01)09506000134352(250)X1(21)S', TODAY)).fields['250']).toBe('X1') // dictionary
    expect(errCode(parseUdi('(01)09506000134352(7004)12', TODAY))).toBe('missing_ai') // dictionary 7004 req=10
  })

  it('duplicate AI: same value tolerated, different value refused (Part B: bwip-js GS1repeatedDifferingAIs)', () => {
    expect(ok(parseUdi('(01)09506000134352(10)A(10)A', TODAY)).lot).toBe('A') // Part B
    expect(errCode(parseUdi('(01)09506000134352(10)A(10)B', TODAY))).toBe('conflicting_ai') // Part B
  })

  it('AIs that exclude each other (GS1 Barcode Syntax Dictionary ex=)', () => {
    expect(errCode(parseUdi('(01)09506000134352(02)09506000134352', TODAY))).toBe('conflicting_ai') // dictionary 02 ex=01
    expect(errCode(parseUdi('(01)09506000134352(21)S1(235)T1', TODAY))).toBe('conflicting_ai') // dictionary 21 ex=235
    expect(errCode(parseUdi('(01)09506000134352(3102)000100(3103)000010', TODAY))).toBe('conflicting_ai') // dictionary 310n ex=310n
  })

  it('unknown AIs are refused, not guessed (brief)', () => {
    expect(errCode(parseUdi('0109506000134352' + '555XYZ', TODAY))).toBe('unknown_ai') // no AI 555 in the dictionary
    expect(errCode(parseUdi('(01)09506000134352(55)X', TODAY))).toBe('unknown_ai') // no AI 55
    expect(errCode(parseUdi('0109506000134352' + '7241' + '01', TODAY))).toBe('unknown_ai') // 7241 exists but is not in our table
  })

  it('other known AIs are kept in fields (dictionary formats)', () => {
    const r = ok(parseUdi('(01)09506000134352(11)250115(22)V1(8012)2.1.0(90)INT(714)ABC', TODAY)) // dictionary entries 11 22 8012 90 714
    expect(r.fields).toMatchObject({ '11': '250115', '22': 'V1', '8012': '2.1.0', '90': 'INT', '714': 'ABC' })
    expect(r.manufactured).toBe('2025-01-15') // brief: manufactured from (11)
  })

  it('truncated data is reported as such', () => {
    expect(errCode(parseUdi('01095060001343', TODAY))).toBe('truncated') // A1.3: (01) is 16 long in total
    expect(errCode(parseUdi('0109506000134352' + '1726123', TODAY))).toBe('truncated') // A1.3: (17) is 8 long
    expect(errCode(parseUdi('0109506000134352' + '10', TODAY))).toBe('truncated') // A1.1: X..20 needs ≥ 1
    expect(errCode(parseUdi('0109506000134352' + '10' + GS + '21X', TODAY))).toBe('truncated') // empty lot
    expect(errCode(parseUdi('0109506000134352' + '24', TODAY))).toBe('truncated') // ends inside AI (240)…
    expect(errCode(parseUdi('0109' + GS + '506000134352', TODAY))).toBe('truncated') // GS inside a fixed field
    expect(errCode(parseUdi('0109506000134352' + '70032612311' + GS + '10A', TODAY))).toBe('truncated') // A1.1: (7003) N10
  })

  it('a GTIN on its own (retail barcode, or typed without "(01)") is explained, not parsed', () => {
    for (const bare of ['5901234123457', '09506000134352', '95212340']) {
      // A1.5 GTIN-13 / GS1 example GTIN-14 / computed GTIN-8: no AI, so not an element string (A1.1)
      const r = parseUdi(bare, TODAY)
      expect(errCode(r)).toBe('unknown_format')
      expect(r.ok ? '' : r.error.message).toMatch(/GTIN/)
    }
  })

  it('a letter where a field number belongs is a layout error', () => {
    expect(errCode(parseUdi('0109506000134352ABC', TODAY))).toBe('bad_format') // A1.3: (01) is exactly 14 digits
  })
})

// ---------------------------------------------------------------------------------------------

describe('dates', () => {
  it.each([
    ['240200', '2024-02-29'], // A1.6 check values (DD=00, leap year)
    ['250200', '2025-02-28'], // A1.6
    ['261200', '2026-12-31'], // A1.6; Part B: bwip-js accepts (17)261200
    ['000200', '2000-02-29'], // A1.6
    ['990200', '1999-02-28'], // A1.6
    ['250100', '2025-01-31'], // trade.md §7.3 ("250100" = 2025-01-31)
    ['280229', '2028-02-29'], // A1.6: bwip-js accepts (17)280229
  ])('(17)%s → %s (DD=00 = last day of the month)', (yymmdd, isoDate) => {
    expect(ok(parseUdi(`(01)09506000134352(17)${yymmdd}`, TODAY)).expiry).toBe(isoDate)
  })

  it.each([
    ['260230'], // A1.6 invalid: 30 February
    ['261332'], // A1.6 invalid: month 13
    ['260229'], // A1.6 / Part B: bwip-js GS1badDay, 2026 is not a leap year
    ['260431'], // A1.6 invalid: 31 April
    ['260001'], // computed: month 00
  ])('(17)%s is refused', (yymmdd) => {
    expect(errCode(parseUdi(`(01)09506000134352(17)${yymmdd}`, TODAY))).toBe('bad_date')
  })

  it('DD=00 is allowed for (11),(13),(15),(16),(17) but not for (7003) (A1.6)', () => {
    for (const ai of ['11', '13', '15', '16', '17']) {
      // A1.6: linter yymmd0 for these AIs
      expect(parseUdi(`(01)09506000134352(${ai})261200`, TODAY).ok).toBe(true)
    }
    expect(errCode(parseUdi('(01)09506000134352(7003)2612001530', TODAY))).toBe('bad_date') // A1.6 / Part B: GS1badDay
    expect(errCode(parseUdi('(01)09506000134352(7003)2612312460', TODAY))).toBe('bad_date') // A1.1: HHMM, hour 24
    expect(errCode(parseUdi('(01)09506000134352(7003)2612311560', TODAY))).toBe('bad_date') // A1.1: minute 60
    expect(ok(parseUdi('(01)09506000134352(7003)2612312359', TODAY)).fields['7003']).toBe('2612312359') // A1.1
  })

  it('(11) production date → manufactured', () => {
    expect(ok(parseUdi('(01)09506000134352(11)250115(17)300114', TODAY))).toMatchObject({
      manufactured: '2025-01-15', // A1.1 (11) YYMMDD
      expiry: '2030-01-14', // A1.1 (17) YYMMDD
    })
  })

  describe('century rule, GS1 General Specifications §7.12 (A1.6 check values)', () => {
    it.each([
      ['2026-06-15', '00', 2000], // A1.6 today 2026
      ['2026-06-15', '49', 2049], // A1.6
      ['2026-06-15', '50', 2050], // A1.6
      ['2026-06-15', '75', 2075], // A1.6
      ['2026-06-15', '76', 2076], // A1.6
      ['2026-06-15', '77', 1977], // A1.6
      ['2026-06-15', '99', 1999], // A1.6
      ['2080-01-01', '29', 2129], // A1.6 today 2080
      ['2080-01-01', '30', 2130], // A1.6
      ['2080-01-01', '31', 2031], // A1.6
      ['1999-12-31', '49', 2049], // A1.6 today 1999
      ['1999-12-31', '50', 1950], // A1.6
    ])('today %s: YY %s → %i', (today, yy, year) => {
      expect(gs1FullYear(Number(yy), Number(today.slice(0, 4)))).toBe(year)
      expect(ok(parseUdi(`(01)09506000134352(17)${yy}0615`, { today })).expiry).toBe(`${year}-06-15`)
    })

    it('leap years follow the resolved century: 000229 is 2000-02-29 in 2026 but 2100 is no leap year in 2080', () => {
      expect(ok(parseUdi('(01)09506000134352(17)000229', TODAY)).expiry).toBe('2000-02-29') // computed from §7.12
      expect(errCode(parseUdi('(01)09506000134352(17)000229', { today: '2080-01-01' }))).toBe('bad_date') // computed: 2100
    })

    it('refuses a malformed opts.today', () => {
      expect(errCode(parseUdi('(01)09506000134352', { today: '2026-02-30' }))).toBe('bad_option') // brief: YYYY-MM-DD
      expect(errCode(parseUdi('(01)09506000134352', { today: '26-01-01' }))).toBe('bad_option') // brief
    })
  })
})

// ---------------------------------------------------------------------------------------------

describe('GS1 human-readable form typed from a label', () => {
  it('trade.md §7.3: (01)09501101530003(17)250101(10)ABC123', () => {
    expect(ok(parseUdi('(01)09501101530003(17)250101(10)ABC123', TODAY))).toMatchObject({
      gtin: '09501101530003', // trade.md §7.3: check digit 3 valid
      expiry: '2025-01-01', // trade.md §7.3
      lot: 'ABC123', // trade.md §7.3
    })
  })

  it('tolerates surrounding whitespace and spaces between fields (brief)', () => {
    const typed = '  (01) 09506000134352 (17)261231  (10)ABC123(21)SN0001 \n' // A1.4 example 1 HRI, with spaces
    expect(ok(parseUdi(typed, TODAY))).toMatchObject({ lot: 'ABC123', serial: 'SN0001', expiry: '2026-12-31' })
  })

  it('keeps parentheses that are not field numbers as lot data (A1.2: ( ) are CSET 82)', () => {
    expect(ok(parseUdi('(01)09506000134352(10)AB(C)1', TODAY)).lot).toBe('AB(C)1') // A1.2
  })

  it('refuses what it cannot read safely', () => {
    expect(errCode(parseUdi('(01)0950600013435', TODAY))).toBe('truncated') // A1.1: N14
    expect(errCode(parseUdi('(01)095060001343521', TODAY))).toBe('too_long') // A1.1: N14
    expect(errCode(parseUdi('(01)09506000134352(10)AB C', TODAY))).toBe('bad_character') // A1.2: space
    expect(errCode(parseUdi('(01)09506000134352(10)', TODAY))).toBe('truncated') // empty lot
    expect(errCode(parseUdi('(01)09506000134353', TODAY))).toBe('bad_check_digit') // A1.5 bad example
    expect(errCode(parseUdi('(1)09506000134352', TODAY))).toBe('bad_format') // not an AI marker
  })
})

// ---------------------------------------------------------------------------------------------

describe('GS1 Digital Link URIs', () => {
  it('path key qualifiers and query attributes (GS1 Barcode Syntax Dictionary dlpkey=22,10,21)', () => {
    const uri = 'https://id.example.org/01/09506000134352/10/ABC123/21/SN0001?17=261231&11=250115' // dictionary dlpkey; host invented
    const r = ok(parseUdi(uri, TODAY))
    expect(r).toMatchObject({ gtin: '09506000134352', lot: 'ABC123', serial: 'SN0001', expiry: '2026-12-31', manufactured: '2025-01-15' })
    expect(r.fields).toEqual({ '01': '09506000134352', '10': 'ABC123', '21': 'SN0001', '17': '261231', '11': '250115' })
  })

  it('percent-decoding, http, custom path prefix, CPV (22), ignores non-AI query keys', () => {
    const r = ok(parseUdi('http://labels.example.com/dl/01/09521234500001/22/V2/10/L%2F7%2E1?linkType=gs1:pip#x', TODAY)) // dictionary dlpkey=22,10,21; judgement on prefix
    expect(r).toMatchObject({ gtin: '09521234500001', lot: 'L/7.1' })
    expect(r.fields['22']).toBe('V2')
  })

  it('GTIN-8/12/13 are padded to 14 digits (A1.1)', () => {
    expect(ok(parseUdi('https://x.example/01/9506000134352', TODAY)).gtin).toBe('09506000134352') // A1.1
    expect(ok(parseUdi('https://x.example/01/952123450005', TODAY)).gtin).toBe('00952123450005') // computed GTIN-12
    expect(ok(parseUdi('https://x.example/01/95212340', TODAY)).gtin).toBe('00000095212340') // computed GTIN-8
  })

  it('refuses non-GS1 links and bad Digital Links', () => {
    expect(errCode(parseUdi('https://www.example.com/products/nail?id=42', TODAY))).toBe('unknown_format') // brief: non-GS1 URL
    expect(errCode(parseUdi('https://x.example/01/09506000134353', TODAY))).toBe('bad_check_digit') // A1.5 bad example
    expect(errCode(parseUdi('https://x.example/01/09506000134352/21/S1/10/L1', TODAY))).toBe('bad_format') // dictionary: order 22,10,21
    expect(errCode(parseUdi('https://x.example/01/09506000134352/17/261231', TODAY))).toBe('bad_format') // (17) is not a key qualifier
    expect(errCode(parseUdi('https://x.example/01/09506000134352/10/L1/extra', TODAY))).toBe('bad_format') // brief: only known qualifiers
    expect(errCode(parseUdi('https://x.example/01/09506000134352/10/', TODAY))).toBe('truncated') // qualifier without a value
    expect(errCode(parseUdi('https://x.example/01/09506000134352?17=261332', TODAY))).toBe('bad_date') // A1.6
    expect(errCode(parseUdi('https://x.example/01/09506000134352?555=1', TODAY))).toBe('unknown_ai') // brief
    expect(errCode(parseUdi('https://x.example/01/09506000134352/10/A%ZZ', TODAY))).toBe('bad_format') // broken % escape
    expect(errCode(parseUdi('https://x.example/01/09506000134352/10/A%20B', TODAY))).toBe('bad_character') // A1.2: space
  })
})

// ---------------------------------------------------------------------------------------------

describe('HIBC', () => {
  describe('mod-43 check characters (ANSI/HIBC 2.6 via A2.4: every check value)', () => {
    it.each([
      ['+A123BJC5D6E71', 'G'], // A2.4 (Zebra DS9908 guide: sum 145, mod 43 = 16 → G)
      ['+A1234BJC5D6E71', 'K'], // A2.4 (esatclear page: 149 → 20 → K)
      ['+A99912345', '7'], // A2.4
      ['+A999ABC1230', 'V'], // A2.4 (HIBCC GUDID guide example)
      ['+$$52001510X3G', 'D'], // A2.4
      ['+A99912345/$$52001510X3', '3'], // A2.4 (combined)
      ['+A123BJC5D6E71/$$3261231LOT123', 'H'], // A2.4
      ['+$$3261231LOT123G', 'I'], // A2.4
      ['+$$+3261231SN0001G', 'V'], // A2.4
    ])('%s → %s', (data, check) => {
      expect(hibcCheckChar(data)).toBe(check)
      const r = parseUdi(data + check, TODAY)
      expect(r.ok).toBe(true)
      // A wrong check character is refused with its own code (brief).
      const wrong = check === 'A' ? 'B' : 'A'
      expect(errCode(parseUdi(data + wrong, TODAY))).toBe('bad_check_character')
    })

    it('returns "" for characters outside the 43-character set (A2.4)', () => {
      expect(hibcCheckChar('+a123')).toBe('') // A2.4: capitals only
    })
  })

  it('primary: di = LIC + product number + unit of measure (A2.1)', () => {
    const r = ok(parseUdi('+A999ABC1230V', TODAY)) // A2.1: HIBCC GUDID guide example → DI A999ABC1230
    expect(r).toMatchObject({ issuer: 'HIBCC', di: 'A999ABC1230' })
    expect(r.gtin).toBeUndefined()
    expect(r.fields).toMatchObject({ lic: 'A999', pcn: 'ABC123', um: '0', check: 'V', symbol: '+A999ABC1230V' })
    expect(ok(parseUdi('+A123BJC5D6E71G', TODAY)).di).toBe('A123BJC5D6E71') // A2.4 example primary
  })

  it('combined primary/secondary (A2.3) and the worked secondary (A2.2: 2020-01-15)', () => {
    expect(ok(parseUdi('+A99912345/$$52001510X33', TODAY))).toMatchObject({
      di: 'A99912345', // A2.3 / Part B round-trip table
      lot: '10X3', // A2.2
      expiry: '2020-01-15', // A2.2: $$5 YYJJJ 20015
    })
    expect(ok(parseUdi('+A123BJC5D6E71/$$3261231LOT123H', TODAY))).toMatchObject({
      di: 'A123BJC5D6E71', // A2.4 check value H
      lot: 'LOT123',
      expiry: '2026-12-31', // A2.2: $$3 YYMMDD
    })
  })

  it('combined with supplementary data: 16D manufacture date, S serial (A2.3)', () => {
    // A2.3: example string from a public HIBC parser README; its check "-" agrees with ours.
    const r = ok(parseUdi('+A99912345/$$52001510X3/16D20111212/S77DE1G45-', TODAY))
    expect(r).toMatchObject({ di: 'A99912345', lot: '10X3', expiry: '2020-01-15', manufactured: '2011-12-12', serial: '77DE1G45' })
    expect(hibcCheckChar('+A99912345/$$52001510X3/16D20111212/S77DE1G45')).toBe('-') // A2.3 README example
    const unknownSupplement = withCheck('+A99912345/$$52001510X3/Q5') // computed; an unknown part is refused (never guess)
    expect(errCode(parseUdi(unknownSupplement, TODAY))).toBe('bad_format')
    const notASecondary = withCheck('+A99912345/0$$52001510X3') // computed; found by the property test
    expect(errCode(parseUdi(notASecondary, TODAY))).toBe('bad_format')
  })

  it('standalone secondary: lot/expiry, no di, link character in fields (brief)', () => {
    const r = ok(parseUdi('+$$52001510X3GD', TODAY)) // A2.2 worked example, Part B round-trip table
    expect(r).toMatchObject({ issuer: 'HIBCC', lot: '10X3', expiry: '2020-01-15' })
    expect(r.di).toBeUndefined()
    expect(r.fields.link).toBe('G') // A2.2: link = primary's check character (+A123BJC5D6E71G)
    expect(ok(parseUdi('+$$+3261231SN0001GV', TODAY))).toMatchObject({ serial: 'SN0001', expiry: '2026-12-31' }) // A2.4
    expect(ok(parseUdi('+$$3261231LOT123GI', TODAY))).toMatchObject({ lot: 'LOT123', expiry: '2026-12-31' }) // A2.4
  })

  // Flags after $$ / $$+ (A2.2, BWIPP wiki "HIBC Data Structures"); check characters computed.
  it.each([
    ['+$$0627LOT1G', { expiry: '2027-06-30', lot: 'LOT1' }], // A2.2 flag 0: MMYY, end of month = judgement [L]
    ['+$$1226ABCG', { expiry: '2026-12-31', lot: 'ABC' }], // A2.2 flag 1: MMYY (first digit of month)
    ['+$$2123126LOTG', { expiry: '2026-12-31', lot: 'LOT' }], // A2.2 flag 2: MMDDYY
    ['+$$3261231LOTG', { expiry: '2026-12-31', lot: 'LOT' }], // A2.2 flag 3: YYMMDD
    ['+$$426123115LOTG', { expiry: '2026-12-31', lot: 'LOT', fields: { expiryHour: '15' } }], // A2.2 flag 4: YYMMDDHH (GMT hour kept)
    ['+$$524366LOTG', { expiry: '2024-12-31', lot: 'LOT' }], // A2.2 flag 5: YYJJJ, 2024 is a leap year (computed)
    ['+$$62436612LOTG', { expiry: '2024-12-31', lot: 'LOT', fields: { expiryHour: '12' } }], // A2.2 flag 6: YYJJJHH
    ['+$$7LOT9G', { lot: 'LOT9' }], // A2.2 flag 7: no date
    ['+$$812LOTG', { lot: 'LOT', fields: { quantity: '12' } }], // A2.2 flag 8: 2-digit quantity
    ['+$$8123261231LOTG', { lot: 'LOT', expiry: '2026-12-31', fields: { quantity: '12' } }], // A2.2 flag 8 then date flag 3
    ['+$$900100LOTG', { lot: 'LOT', fields: { quantity: '00100' } }], // A2.2 flag 9: 5-digit quantity
    ['+$$9001003261231LOTG', { lot: 'LOT', expiry: '2026-12-31', fields: { quantity: '00100' } }], // A2.2 flag 9 then date flag
    ['+$$+7SN1G', { serial: 'SN1' }], // A2.2 $$+: serial with flag
    ['+$+SN77G', { serial: 'SN77' }], // A2.2 $+: serial (legacy)
    ['+$LOT5G', { lot: 'LOT5' }], // A2.2 $: lot (legacy)
    ['+26365LOTG', { expiry: '2026-12-31', lot: 'LOT' }], // A2.2 5-digit YYJJJ legacy; 20YY from memory [L]
  ])('%s', (data, expected) => {
    expect(ok(parseUdi(withCheck(data), TODAY))).toMatchObject({ issuer: 'HIBCC', ...expected })
  })

  it.each([
    ['+$$525366LOTG', 'bad_date'], // computed: day 366 in 2025
    ['+$$3261332LOTG', 'bad_date'], // computed: month 13
    ['+$$1326LOTG', 'bad_date'], // computed: MMYY month 13
    ['+$$426123125LOTG', 'bad_date'], // computed: hour 25
    ['+$$ALOTG', 'bad_format'], // A2.2: a flag must follow $$
    ['+$$8129LOTG', 'bad_format'], // judgement: a second quantity flag after the quantity
    ['+$$3' + '2612', 'truncated'], // computed: date cut short (no link; still a valid check)
    ['+$$7' + 'L'.repeat(19) + 'G', 'too_long'], // A2.2: lot up to 18
    ['+A1/$$7LOT', 'bad_format'], // A2.1: primary too short
    ['+A123ABC', 'bad_format'], // A2.1: unit of measure must be a digit
    ['+A12-B1', 'bad_format'], // A2.1: LIC is letter + 3 alphanumerics
    ['+A123B.C1', 'bad_format'], // A2.1: product number A–Z/0–9 only
    ['+A123' + 'P'.repeat(19) + '1', 'too_long'], // A2.1: product number 1–18
    ['+$LO/T5G', 'bad_format'], // judgement: "/" cannot be in a standalone secondary
  ])('%s → %s', (data, code) => {
    expect(errCode(parseUdi(withCheck(data), TODAY))).toBe(code)
  })

  it('lower case is a bad character; HIBC uses capitals only (A2.4)', () => {
    expect(errCode(parseUdi('+a123bjc5d6e71g', TODAY))).toBe('bad_character') // A2.4 / Part B: bwip-js hibcdatamatrixBadCharacter
  })

  it('strips Code 39 * start/stop and AIM identifiers ]A0 ]C0 ]d1 ]Q1 (A2.5)', () => {
    for (const scan of [
      '*+A123BJC5D6E71G*', // A2.4: HRI shows *…*, excluded from the check
      ']A0+A123BJC5D6E71G', // A2.5
      ']C0+A123BJC5D6E71G', // A2.5
      ']d1+A123BJC5D6E71G', // A2.5
      ']Q1+A123BJC5D6E71G', // A2.5
      ' +A123BJC5D6E71G\r\n', // scanner terminator (judgement)
    ]) {
      expect(ok(parseUdi(scan, TODAY)).di).toBe('A123BJC5D6E71')
    }
  })

  it('a space check character (A2.4: "can be a space; HRI then shows _")', () => {
    const data = '+A999ABC490' // computed: its check character is a space
    expect(hibcCheckChar(data)).toBe(' ')
    expect(ok(parseUdi(data + ' ', TODAY)).di).toBe('A999ABC490') // scanned
    expect(ok(parseUdi(data + ' \r', TODAY)).di).toBe('A999ABC490') // scanned with CR
    expect(ok(parseUdi(`*${data}_*`, TODAY)).di).toBe('A999ABC490') // typed from Code 39 HRI
    expect(ok(parseUdi(`${data}_`, TODAY)).fields.symbol).toBe(`${data} `) // typed without stars
    expect(ok(parseUdi('+A123BJC5D6E71G ', TODAY)).di).toBe('A123BJC5D6E71') // a stray space after a normal code
  })

  it('a "/" check or link character is not a separator (A2.4 value 40)', () => {
    const primary = '+A999ABC690' // computed: its check character is "/"
    expect(hibcCheckChar(primary)).toBe('/')
    expect(ok(parseUdi(primary + '/', TODAY)).di).toBe('A999ABC690')
    const secondary = withCheck('+$$3261231LOT123/') // link "/" (computed)
    expect(ok(parseUdi(secondary, TODAY))).toMatchObject({ lot: 'LOT123', fields: { link: '/' } })
  })

  it('HIBC under a GS1 symbology identifier, or GS1 under a plain one, is refused', () => {
    expect(errCode(parseUdi(']d2+A123BJC5D6E71G', TODAY))).toBe('unknown_format') // A1.7 vs A2.5
    expect(errCode(parseUdi(']C00109506000134352', TODAY))).toBe('unknown_format') // A2.5: ]C0 = no FNC1, so not GS1-128
    expect(errCode(parseUdi(']X0abc', TODAY))).toBe('unknown_format') // unknown identifier
  })
})

// ---------------------------------------------------------------------------------------------

describe('errors', () => {
  it.each([
    ['empty', ''], // nothing
    ['whitespace', '   \r\n'], // whitespace only
    ['word', 'hello'], // not a UDI
    ['identifier only', ']d2'], // A1.7 identifier with no data
    ['ISO/IEC 15434 envelope', '[)>\u001e06'], // not supported (brief keeps to GS1/HIBC/Digital Link)
    ['5000 digits', '0'.repeat(5000)], // far longer than any symbol holds
  ])('%s gives a coded error with a plain message', (_label, scan) => {
    const r = parseUdi(scan, TODAY)
    expect(r.ok).toBe(false)
    if (r.ok) return
    expect(UDI_ERROR_CODES).toContain(r.error.code)
    expect(r.error.code).not.toBe('internal')
    expect(r.error.message.length).toBeGreaterThan(10)
  })

  it('never throws on values that are not strings', () => {
    for (const v of [undefined, null, 42, {}, [], Symbol('x')]) {
      const r = parseUdi(v as unknown as string, TODAY) // brief: never throws, callers outside TypeScript
      expect(r.ok).toBe(false)
    }
    expect(parseUdi('(01)09506000134352', null as unknown as undefined).ok).toBe(true) // null options
  })

  it('messages are calm and say what to do next (DESIGN.md tone)', () => {
    const samples = [
      '0109506000134353', // bad_check_digit
      '+A123BJC5D6E71X', // bad_check_character
      '(01)09506000134352(17)260230', // bad_date
      '01095060001343', // truncated
      '(10)ABC', // missing_gtin
      '(01)09506000134352(555)1', // unknown_ai
      '(01)09506000134352(10)A(10)B', // conflicting_ai
      '(01)09506000134352(10)A#', // bad_character
      'https://example.com/', // unknown_format
    ]
    for (const s of samples) {
      const r = parseUdi(s, TODAY)
      if (r.ok) throw new Error(s)
      expect(r.error.message).not.toMatch(/!/)
      expect(r.error.message).toMatch(/rescan|type|scan/i)
    }
    const gtin = parseUdi('0109506000134353', TODAY)
    expect(gtin.ok ? '' : gtin.error.message).toBe('The GTIN check digit does not match — rescan or type it from the label.') // brief wording
  })
})

// ---------------------------------------------------------------------------------------------

describe('toHri', () => {
  it('GS1: (01), fixed-length fields, then (10), (21); and parses back to the same fields', () => {
    const r = parseUdi(']d20109506000134352' + '10ABC123' + GS + '21SN0001' + GS + '17261231', TODAY) // A1.4 example 1 content, other order
    const hri = toHri(r)
    expect(hri).toBe('(01)09506000134352(17)261231(10)ABC123(21)SN0001') // A5 FHIR carrierHRF example
    expect(ok(parseUdi(hri, TODAY)).fields).toEqual(ok(r).fields)
  })

  it('HIBC: the data string; failed parse: empty string', () => {
    expect(toHri(parseUdi('*+A123BJC5D6E71G*', TODAY))).toBe('+A123BJC5D6E71G') // A2.4
    expect(toHri(parseUdi('nonsense', TODAY))).toBe('') // documented: '' for a failed parse
  })
})
