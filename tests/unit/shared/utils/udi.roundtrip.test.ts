/**
 * Round trips through real symbols: bwip-js draws the label, @zxing/library reads the PNG,
 * tests/helpers/barcodes.ts turns that into what a scanner in a given mode transmits, and
 * parseUdi must recover exactly the values that were encoded. bwip-js and zxing are independent
 * implementations, so agreement here is evidence the parser reads real scanner output.
 *
 * All GTINs are GS1's example 09506000134352, invented ones on the demonstration prefix 952
 * (standards.md A1.8; check digits verified below), or the trade.md §7.3 examples.
 * Expected values are written out by hand from the label text, not computed by the parser.
 */
import { describe, expect, it } from 'vitest'
import { isValid as gtinPackageIsValid } from 'gtin'
import { parseUdi, type UdiParse } from '../../../../shared/utils/udi'
import { decodePng, kindOfBcid, makeSymbolPng, scannerString, type ScannerOptions } from '../../../helpers/barcodes'

const TODAY = { today: '2026-06-15' } // fixed clock for the GS1 century rule
const GS = '\u001D'

interface Expect {
  gtin?: string
  di?: string
  lot?: string
  serial?: string
  expiry?: string
  manufactured?: string
  fields?: Record<string, string>
}

interface Label {
  bcid: string
  text: string
  expect: Expect
  /** What zxing must return, where a source gives it (standards.md Part B). */
  decoded?: string
}

// GS1 labels: at least a dozen varied contents (brief).
const GS1_LABELS: Label[] = [
  {
    // standards.md A1.4 worked example 1; Part B round-trip table
    bcid: 'gs1datamatrix',
    text: '(01)09506000134352(17)261231(10)ABC123(21)SN0001',
    decoded: GS + '01095060001343521726123110ABC123' + GS + '21SN0001',
    expect: { gtin: '09506000134352', lot: 'ABC123', serial: 'SN0001', expiry: '2026-12-31' },
  },
  {
    // invented: lot with - / . (A1.2 CSET 82)
    bcid: 'gs1datamatrix',
    text: '(01)09521234500001(17)270630(10)LOT-2026/07.A',
    expect: { gtin: '09521234500001', lot: 'LOT-2026/07.A', expiry: '2027-06-30' },
  },
  {
    // invented: lower case and _ (A1.2; Part B: bwip-js accepts abc-xyz_1), production date (11)
    bcid: 'gs1datamatrix',
    text: '(01)09521234500001(11)250115(17)300114(10)abc-xyz_1',
    expect: { gtin: '09521234500001', lot: 'abc-xyz_1', manufactured: '2025-01-15', expiry: '2030-01-14' },
  },
  {
    // invented: serial only, indicator-1 GTIN (A1.5 computed 19521234500008)
    bcid: 'gs1datamatrix',
    text: '(01)19521234500008(21)SN-000042',
    expect: { gtin: '19521234500008', serial: 'SN-000042' },
  },
  {
    // invented: DD=00 expiry → last day of the month (A1.6: 261200 → 2026-12-31)
    bcid: 'gs1datamatrix',
    text: '(01)09521234500018(17)261200(10)L1',
    expect: { gtin: '09521234500018', lot: 'L1', expiry: '2026-12-31' },
  },
  {
    // invented: 20-character lot (A1.1 maximum), leap day (A1.6: bwip-js accepts 280229)
    bcid: 'gs1datamatrix',
    text: '(01)09521234500025(10)ABCDEFGHIJ1234567890(17)280229',
    expect: { gtin: '09521234500025', lot: 'ABCDEFGHIJ1234567890', expiry: '2028-02-29' },
  },
  {
    // standards.md A1.4 worked example 3: (7003) needs a GS although fixed-length
    bcid: 'gs1datamatrix',
    text: '(01)09506000134352(7003)2612311530(240)REF-9(30)5(10)L1',
    decoded: GS + '010950600013435270032612311530' + GS + '240REF-9' + GS + '305' + GS + '10L1',
    expect: { gtin: '09506000134352', lot: 'L1', fields: { '7003': '2612311530', '240': 'REF-9', '30': '5' } },
  },
  {
    // trade.md §7.3 first example
    bcid: 'gs1datamatrix',
    text: '(01)09501101530003(17)250101(10)ABC123',
    expect: { gtin: '09501101530003', lot: 'ABC123', expiry: '2025-01-01' },
  },
  {
    // trade.md §7.3 second example (serial "10")
    bcid: 'gs1datamatrix',
    text: '(01)03453120000011(17)191125(10)ABCD1234(21)10',
    expect: { gtin: '03453120000011', lot: 'ABCD1234', serial: '10', expiry: '2019-11-25' },
  },
  {
    // standards.md A1.4 worked example 2; Part B round-trip table (ASSUME_GS1)
    bcid: 'gs1-128',
    text: '(01)09506000134352(10)ABC123(17)261231',
    decoded: ']C1010950600013435210ABC123' + GS + '17261231',
    expect: { gtin: '09506000134352', lot: 'ABC123', expiry: '2026-12-31' },
  },
  {
    // invented: serial with / . - in GS1-128
    bcid: 'gs1-128',
    text: '(01)09521234500032(17)290101(21)S/N.7-A',
    expect: { gtin: '09521234500032', serial: 'S/N.7-A', expiry: '2029-01-01' },
  },
  {
    // invented: production date on 29 Feb 2024 (A1.6 leap year), lower-case lot
    bcid: 'gs1-128',
    text: '(01)09521234500049(11)240229(10)b.12/x',
    expect: { gtin: '09521234500049', lot: 'b.12/x', manufactured: '2024-02-29' },
  },
  {
    // Part B round-trip table: GS1 QR, no FNC1 marker in zxing's output
    bcid: 'gs1qrcode',
    text: '(01)09506000134352(10)ABC123(17)261231',
    decoded: '010950600013435210ABC123' + GS + '17261231',
    expect: { gtin: '09506000134352', lot: 'ABC123', expiry: '2026-12-31' },
  },
  {
    // invented: lot and serial, both variable, in GS1 QR
    bcid: 'gs1qrcode',
    text: '(01)09521234500056(17)311130(10)Q-77(21)qr.serial/1',
    expect: { gtin: '09521234500056', lot: 'Q-77', serial: 'qr.serial/1', expiry: '2031-11-30' },
  },
  {
    // invented: DD=00 in February of a non-leap year (A1.6: 250200 → 2025-02-28 pattern)
    bcid: 'gs1qrcode',
    text: '(01)09521234500063(17)270200(10)FEB',
    expect: { gtin: '09521234500063', lot: 'FEB', expiry: '2027-02-28' },
  },
]

// HIBC labels: bwip-js adds the leading + and the check character itself (Part B).
const HIBC_LABELS: Label[] = [
  {
    // Part B round-trip table; A2.4 check G
    bcid: 'hibcdatamatrix',
    text: 'A123BJC5D6E71',
    decoded: '+A123BJC5D6E71G',
    expect: { di: 'A123BJC5D6E71' },
  },
  {
    // Part B round-trip table; A2.3 combined, A2.2 date 2020-01-15
    bcid: 'hibcdatamatrix',
    text: 'A99912345/$$52001510X3',
    decoded: '+A99912345/$$52001510X33',
    expect: { di: 'A99912345', lot: '10X3', expiry: '2020-01-15' },
  },
  {
    // A2.1 / A2.4: GUDID guide example, check V
    bcid: 'hibcdatamatrix',
    text: 'A999ABC1230',
    decoded: '+A999ABC1230V',
    expect: { di: 'A999ABC1230' },
  },
  {
    // Part B round-trip table: standalone secondary in Code 128
    bcid: 'hibccode128',
    text: '$$52001510X3G',
    decoded: '+$$52001510X3GD',
    expect: { lot: '10X3', expiry: '2020-01-15', fields: { link: 'G' } },
  },
  {
    // A2.4 check I
    bcid: 'hibccode128',
    text: '$$3261231LOT123G',
    decoded: '+$$3261231LOT123GI',
    expect: { lot: 'LOT123', expiry: '2026-12-31' },
  },
  {
    // Part B round-trip table: Code 39
    bcid: 'hibccode39',
    text: 'A123BJC5D6E71',
    decoded: '+A123BJC5D6E71G',
    expect: { di: 'A123BJC5D6E71' },
  },
  {
    // A2.4 check V (serial secondary) in Code 39
    bcid: 'hibccode39',
    text: '$$+3261231SN0001G',
    decoded: '+$$+3261231SN0001GV',
    expect: { serial: 'SN0001', expiry: '2026-12-31' },
  },
  {
    // A2.4 check H (combined) in QR
    bcid: 'hibcqrcode',
    text: 'A123BJC5D6E71/$$3261231LOT123',
    decoded: '+A123BJC5D6E71/$$3261231LOT123H',
    expect: { di: 'A123BJC5D6E71', lot: 'LOT123', expiry: '2026-12-31' },
  },
  {
    // computed: this primary's check character is a space (A2.4: value 38)
    bcid: 'hibccode39',
    text: 'A999ABC490',
    decoded: '+A999ABC490 ',
    expect: { di: 'A999ABC490' },
  },
  {
    // invented: MMYY expiry (A2.2 flag 1; end of month is judgement) with lot, QR
    bcid: 'hibcqrcode',
    text: 'A999ABC1230/$$1227LOT-9.2',
    expect: { di: 'A999ABC1230', lot: 'LOT-9.2', expiry: '2027-12-31' },
  },
]

/** Scanner set-ups every label is read through (tests/helpers/barcodes.ts). */
const SETUPS: Array<{ name: string; scanner: ScannerOptions; parse?: { gsSubstitute?: string } }> = [
  // Part B: zxing's own text (leading GS for DataMatrix, ]C1 for Code 128, nothing for QR)
  { name: 'camera (zxing text)', scanner: { mode: 'zxing' } },
  // A1.4 rule 1 / A1.7 / A2.5 (GSCN 16-477): the leading FNC1 is sent as ]d2 ]C1 ]Q3; HIBC as ]d1 ]C0 ]Q1 ]A0
  { name: 'scanner with AIM identifiers', scanner: { mode: 'aim' } },
  // GSCN 16-477 via A1.4: the leading FNC1 is not data, so with identifiers off nothing is sent for it
  { name: 'scanner without identifiers', scanner: { mode: 'plain' } },
  // brief: keyboard wedge with a configured GS substitute; CR LF terminator (judgement)
  { name: 'wedge scanner sending ~ for GS, with CR LF', scanner: { mode: 'aim', gsSubstitute: '~', suffix: '\r\n' }, parse: { gsSubstitute: '~' } },
]

function check(r: UdiParse, e: Expect): void {
  if (!r.ok) throw new Error(`${r.error.code}: ${r.error.message}`)
  for (const key of ['gtin', 'di', 'lot', 'serial', 'expiry', 'manufactured'] as const) {
    expect(r[key], key).toBe(e[key] ?? (key === 'di' ? e.gtin : undefined))
  }
  if (e.fields) expect(r.fields).toMatchObject(e.fields)
}

describe('demo GTINs are valid', () => {
  it.each(GS1_LABELS.map((l) => [l.expect.gtin ?? '']))('%s', (gtin) => {
    expect(gtinPackageIsValid(gtin)).toBe(true) // second opinion: gtin package (standards.md Part B)
  })
})

describe.each([...GS1_LABELS, ...HIBC_LABELS])('$bcid $text', (label) => {
  const kind = kindOfBcid(label.bcid)
  const decodedP = makeSymbolPng(label.bcid, label.text).then((png) => decodePng(png, kind))

  if (label.decoded !== undefined) {
    it('zxing reads what the sources say', async () => {
      expect(await decodedP).toBe(label.decoded)
    })
  }

  it.each(SETUPS)('$name', async ({ scanner, parse }) => {
    const scan = scannerString(await decodedP, kind, { ...scanner, gs1: label.bcid.startsWith('gs1') })
    check(parseUdi(scan, { ...TODAY, ...parse }), label.expect)
  })
})

describe('GS1 Digital Link in a plain QR code', () => {
  it.each([
    // brief: Digital Link, any host; dictionary dlpkey=22,10,21; host invented
    ['https://id.example.org/01/09506000134352/10/ABC123/21/SN0001?17=261231', { gtin: '09506000134352', lot: 'ABC123', serial: 'SN0001', expiry: '2026-12-31' }],
    // percent-encoded "/" in the lot, GTIN-13 in the path (A1.1 padding)
    ['https://labels.example.com/01/9521234500001/10/L%2F9?11=250115', { gtin: '09521234500001', lot: 'L/9', manufactured: '2025-01-15' }],
  ] as Array<[string, Expect]>)('%s', async (uri, e) => {
    const png = await makeSymbolPng('qrcode', uri)
    const decoded = decodePng(png, 'qr')
    expect(decoded).toBe(uri)
    for (const mode of ['zxing', 'aim'] as const) check(parseUdi(scannerString(decoded, 'qr', { mode }), TODAY), e)
  })
})

describe('the AI table agrees with bwip-js on which fields need a separator', () => {
  // bwip-js inserts GS only after AIs its (independent) table says need FNC1 (standards.md Part B,
  // "inserts GS only where needed"). If our table got a length or fixed-ness wrong, the field
  // after it would be misread. Values follow the GS1 Barcode Syntax Dictionary formats.
  it.each([
    ['11', '250115'], // dictionary: N6,yymmd0
    ['13', '250116'], // dictionary: N6,yymmd0
    ['15', '270101'], // dictionary: N6,yymmd0
    ['16', '270102'], // dictionary: N6,yymmd0
    ['20', '07'], // dictionary: N2
    ['22', 'CPV-1'], // dictionary: X..20
    ['240', 'REF/9.1'], // dictionary: X..30
    ['241', 'CUST-1'], // dictionary: X..30
    ['242', '123456'], // dictionary: N..6
    ['243', 'PCN-1'], // dictionary: X..20
    ['251', 'SRC-1'], // dictionary: X..30
    ['30', '12'], // dictionary: N..8
    ['3103', '001250'], // dictionary: N6
    ['422', '250'], // dictionary: N3,iso3166
    ['7003', '2701011200'], // dictionary: N6,yymmdd N4,hhmi
    ['7006', '261231'], // dictionary: N6,yymmdd
    ['710', 'PZN123'], // dictionary: X..20
    ['8008', '26123115'], // dictionary: N6,yymmdd N2,hh [N2] [N2]
    ['8012', '1.2.3'], // dictionary: X..20
    ['90', 'INT-1'], // dictionary: X..30
    ['91', 'X'], // dictionary: X..90
  ])('(%s)%s', async (ai, value) => {
    for (const text of [`(01)09506000134352(${ai})${value}(10)L1`, `(01)09506000134352(10)L1(${ai})${value}`]) {
      const decoded = decodePng(await makeSymbolPng('gs1datamatrix', text), 'datamatrix')
      const r = parseUdi(scannerString(decoded, 'datamatrix', { mode: 'aim' }), TODAY)
      if (!r.ok) throw new Error(`${text}: ${r.error.code}`)
      expect(r.fields[ai]).toBe(value)
      expect(r.lot).toBe('L1')
    }
  })
})

describe('deliberately bad labels are refused (bwip-js dontlint, Part B)', () => {
  it.each([
    ['gs1datamatrix', '(01)09506000134353(10)A', 'bad_check_digit'], // A1.5 bad example
    ['gs1datamatrix', '(01)09506000134352(17)260230', 'bad_date'], // A1.6 invalid date
    ['gs1datamatrix', '(01)09506000134352(10)ABCDEFGHIJ1234567890X', 'too_long'], // A1.1 / Part B: 21-char lot
    ['gs1-128', '(10)ABC123', 'missing_gtin'], // Part B: bwip-js GS1missingAIs when linted
    ['gs1qrcode', '(01)09506000134352(10)A(10)B', 'conflicting_ai'], // Part B: GS1repeatedDifferingAIs
    ['code128', '+A123BJC5D6E71X', 'bad_check_character'], // A2.4: right check would be G
  ])('%s %s → %s', async (bcid, text, code) => {
    const kind = kindOfBcid(bcid)
    const decoded = decodePng(await makeSymbolPng(bcid, text, { dontlint: true }), kind)
    const r = parseUdi(scannerString(decoded, kind, { mode: 'aim', gs1: bcid.startsWith('gs1') }), TODAY)
    expect(r.ok ? 'ok' : r.error.code).toBe(code)
  })
})
