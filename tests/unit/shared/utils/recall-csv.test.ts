/**
 * Recall-notice CSV: good rows, each kind of bad row, file-format variants, and a property test
 * that no text makes the parser throw. "A1.x"/"A2.x" are sections of standards.md. Data invented:
 * GTINs on GS1 demo prefix 952 (A1.8), HIBC LIC A999 from the HIBCC documentation examples (A2.1).
 */
import { describe, expect, it, vi } from 'vitest'
import fc from 'fast-check'
import { isValid as gtinPackageIsValid } from 'gtin'
import {
  checkGtin,
  checkHibccDi,
  checkIsoDate,
  checkLotOrSerial,
  matchRecallRow,
  parseRecallCsv,
  type RecallRow,
} from '../../../../shared/utils/recall-csv'

const messages = (r: { errors: { message: string }[] }) => r.errors.map((e) => e.message)

describe('parseRecallCsv: good files', () => {
  it('reads rows with lot, serial, expiry range, note and a DI-only row', () => {
    const csv = [
      'gtin,lot,serial,expiry_from,expiry_to,note',
      '09521234500018,FH2601A,,,,only this lot',
      '09521234500025,,SN-000417,,,',
      '09521234500032,,,2026-01-01,2026-06-30,"expiring in the first half, all lots"',
      '09521234500049,,,,,every unit',
    ].join('\n')
    const r = parseRecallCsv(csv)
    expect(r.errors).toEqual([])
    expect(r.columns).toEqual(['gtin', 'lot', 'serial', 'expiry_from', 'expiry_to', 'note'])
    expect(r.rows).toEqual<RecallRow[]>([
      { row: 1, gtin: '09521234500018', hibccDi: null, lot: 'FH2601A', serial: null, expiryFrom: null, expiryTo: null, note: 'only this lot', allUnits: false },
      { row: 2, gtin: '09521234500025', hibccDi: null, lot: null, serial: 'SN-000417', expiryFrom: null, expiryTo: null, note: null, allUnits: false },
      { row: 3, gtin: '09521234500032', hibccDi: null, lot: null, serial: null, expiryFrom: '2026-01-01', expiryTo: '2026-06-30', note: 'expiring in the first half, all lots', allUnits: false },
      { row: 4, gtin: '09521234500049', hibccDi: null, lot: null, serial: null, expiryFrom: null, expiryTo: null, note: 'every unit', allUnits: true },
    ])
    for (const row of r.rows) expect(gtinPackageIsValid(row.gtin!)).toBe(true) // second GTIN implementation (Part B)
  })

  it('maps header synonyms, case and spaces; pads GTIN-13/12/8 to 14 digits', () => {
    const csv = ' UDI-DI , Lot Number ,SN,Expiry From\n9521234500018,L1,,\n012345678905,L2,,\n96385074,,S9,2027-01-31\n'
    const r = parseRecallCsv(csv)
    expect(r.errors).toEqual([])
    expect(r.columns).toEqual(['gtin', 'lot', 'serial', 'expiry_from'])
    // GS1 General Specifications: GTIN-8/12/13 left-padded with zeros to 14 (standards.md A1.1)
    expect(r.rows.map((x) => x.gtin)).toEqual(['09521234500018', '00012345678905', '00000096385074'])
    expect(parseRecallCsv('DI,batch\n09521234500018,X1\n').rows[0]).toMatchObject({ gtin: '09521234500018', lot: 'X1' })
    expect(parseRecallCsv('Device Identifier,Serial Number\n09521234500018,S1\n').rows[0]).toMatchObject({ gtin: '09521234500018', serial: 'S1' })
    expect(parseRecallCsv('udi-di,expiry_to,NOTE\n09521234500018,2027-01-01,n\n').columns).toEqual(['gtin', 'expiry_to', 'note'])
  })

  it('reads an HIBCC DI with its own character set for lot', () => {
    const r = parseRecallCsv('hibcc_di,lot\nA999HE1050,HL2604B\na999he1055,HL 2604/C\n')
    expect(r.errors).toEqual([])
    expect(r.rows.map((x) => [x.hibccDi, x.lot])).toEqual([['A999HE1050', 'HL2604B'], ['A999HE1055', 'HL 2604/C']])
  })

  it('handles BOM, CRLF, semicolons and quoted fields with separators and quotes inside', () => {
    const csv = '\uFEFFGTIN;Lot;Note\r\n09521234500018;FH2601A;"Ward 3; ""urgent"""\r\n\r\n09521234500025;"FH;2602";\r\n'
    const r = parseRecallCsv(csv)
    expect(r.errors).toEqual([])
    expect(r.columns).toEqual(['gtin', 'lot', 'note'])
    expect(r.rows.map((x) => [x.gtin, x.lot, x.note])).toEqual([
      ['09521234500018', 'FH2601A', 'Ward 3; "urgent"'],
      ['09521234500025', 'FH;2602', null],
    ])
    expect(r.rows.map((x) => x.row)).toEqual([1, 2]) // blank lines are not data rows
  })

  it('tab-separated files and a one-column file work too', () => {
    expect(parseRecallCsv('gtin\tlot\n09521234500018\tA\n').rows).toHaveLength(1)
    const one = parseRecallCsv('gtin\n09521234500018\n09521234500025\n')
    expect(one.errors).toEqual([])
    expect(one.rows.every((x) => x.allUnits)).toBe(true)
  })
})

describe('parseRecallCsv: bad files and rows', () => {
  it('wrong GTIN check digit: says which digit it should end in', () => {
    // GS1 check digit of 0952123450001 is 8 (standards.md A1.8 example GTIN 09521234500018)
    const r = parseRecallCsv('gtin,lot\n09521234500018,A\n09521234500018,B\n09521234500018,C\n09521234500019,D\n')
    expect(r.errors).toEqual([{ row: 4, column: 'gtin', message: 'Row 4: GTIN 09521234500019 has a wrong check digit (should end in 8). Copy it again from the notice.' }])
    expect(r.rows).toHaveLength(3)
  })

  it('unknown column: one error on row 0 naming it, rows still checked', () => {
    const r = parseRecallCsv('gtin,Colour,lot\n09521234500018,red,A\n')
    expect(r.errors).toEqual([{ row: 0, column: 'Colour', message: 'Unknown column “Colour”. Use gtin, hibcc_di, lot, serial, expiry_from, expiry_to or note.' }])
    expect(r.rows).toHaveLength(1)
  })

  it('a repeated column and a header line that is really data', () => {
    const warn = vi.spyOn(console, 'warn').mockImplementation(() => {})
    const d = parseRecallCsv('gtin,lot,Batch,colour,Colour\n09521234500018,A,B,c,d\n')
    expect(d.errors.map((e) => [e.row, e.column])).toEqual([[0, 'lot'], [0, 'colour']])
    expect(d.errors[0]!.message).toBe('The column lot appears more than once (column 3 is another “Batch”). Keep one and delete the others.')
    expect(d.rows[0]!.lot).toBe('A') // the first one counts
    expect(warn).not.toHaveBeenCalled() // papaparse's own renaming (and its console warning) is avoided
    warn.mockRestore()
    const r = parseRecallCsv('09521234500018,FH2601A\n09521234500025,FH2602C\n')
    expect(messages(r)[0]).toMatch(/^The first line must name the columns/)
    expect(r.rows).toEqual([])
  })

  it('no DI column at all → one file error, not one per row', () => {
    const r = parseRecallCsv('lot,serial\nA,\nB,\nC,\n')
    expect(r.errors).toHaveLength(1)
    expect(r.errors[0]!.row).toBe(0)
    expect(r.errors[0]!.message).toMatch(/no gtin column/)
  })

  it('impossible dates and a reversed range', () => {
    const r = parseRecallCsv('gtin,expiry_from,expiry_to\n09521234500018,2026-02-30,\n09521234500018,,2026-13-01\n09521234500018,31/12/2026,\n09521234500018,2027-01-01,2026-12-31\n09521234500018,2028-02-29,2028-02-29\n')
    expect(r.errors.map((e) => [e.row, e.column])).toEqual([[1, 'expiry_from'], [2, 'expiry_to'], [3, 'expiry_from'], [4, 'expiry_to']])
    expect(messages(r)[0]).toBe('Row 1: expiry_from 2026-02-30 is not a real date (February 2026 has 28 days).')
    expect(messages(r)[2]).toMatch(/must be a date written YYYY-MM-DD/)
    expect(messages(r)[3]).toMatch(/is after expiry_to/)
    expect(r.rows.map((x) => x.row)).toEqual([5]) // 2028 is a leap year
  })

  it('missing DI in a row', () => {
    const r = parseRecallCsv('gtin,hibcc_di,lot\n,,FH2601A\n')
    expect(r.errors).toEqual([{ row: 1, message: 'Row 1: no device identifier. Fill in the gtin (or hibcc_di for HIBCC-labelled items) of the recalled item.' }])
  })

  it('too-long lot and characters outside CSET 82 / the HIBC set', () => {
    // GS1 AI (10) X..20 and CSET 82 (standards.md A1.1, A1.2)
    const r = parseRecallCsv(`gtin,lot,serial\n09521234500018,${'A'.repeat(21)},\n09521234500018,${'A'.repeat(20)},\n09521234500018,AB#1,\n09521234500018,,SN 1\n`)
    expect(r.errors.map((e) => [e.row, e.column])).toEqual([[1, 'lot'], [3, 'lot'], [4, 'serial']])
    expect(messages(r)[0]).toMatch(/is 21 characters long; a GS1 lot has at most 20/)
    expect(messages(r)[1]).toMatch(/contains “#”/)
    expect(messages(r)[2]).toMatch(/contains a space/)
    // HIBC: 43-character set, capitals only (standards.md A2.4); lot up to 18 (A2.2)
    const h = parseRecallCsv(`hibcc_di,lot\nA999HE1050,hl1\nA999HE1050,${'B'.repeat(19)}\n`)
    expect(h.errors.map((e) => e.column)).toEqual(['lot', 'lot'])
    expect(messages(h)[0]).toMatch(/capital letters/)
  })

  it('duplicate rows are reported naming the first one', () => {
    const r = parseRecallCsv('gtin,lot\n09521234500018,FH2601A\n9521234500018,FH2601A\n09521234500018,FH2601B\n')
    // the GTIN-13 form pads to the same GTIN-14, so row 2 is the same item and lot
    expect(r.errors).toEqual([{ row: 2, message: 'Row 2 repeats row 1 (same device identifier, lot, serial and expiry range). Delete one of them.' }])
    expect(r.rows.map((x) => x.row)).toEqual([1, 3])
  })

  it('empty file, whitespace-only file, header without rows', () => {
    for (const t of ['', '   \n\n', '\uFEFF']) {
      const r = parseRecallCsv(t)
      expect(r.rows).toEqual([])
      expect(r.errors).toHaveLength(1)
      expect(r.errors[0]!.message).toMatch(/^The file is empty/)
    }
    expect(messages(parseRecallCsv('gtin,lot\n'))).toEqual(['The file has a header line but no items. Add one line per affected item.'])
  })

  it('structural problems: unclosed quote, too many values', () => {
    const q = parseRecallCsv('gtin,lot\n09521234500018,A\n"09521234500025,B\n09521234500032,C\n')
    expect(q.errors).toHaveLength(1)
    expect(q.errors[0]!.row).toBe(2)
    expect(q.errors[0]!.message).toMatch(/line 3 of the file\): a double quote is not closed/)
    const m = parseRecallCsv('gtin,lot\n09521234500018,A,extra\n')
    expect(m.errors).toEqual([{ row: 1, message: expect.stringMatching(/^Row 1 has more values than the header has columns.*comma/) }])
    expect(m.rows).toEqual([])
  })

  it('spreadsheet damage to GTINs is explained', () => {
    expect(messages(parseRecallCsv('gtin\n9.52123E+12\n'))[0]).toMatch(/turned into a number by a spreadsheet/)
    expect(messages(parseRecallCsv('gtin\n095212345000\n'))[0]).toMatch(/wrong check digit/) // 12 digits: GTIN-12 length, bad check
    expect(messages(parseRecallCsv('gtin\n0952123450001\n'))[0]).toMatch(/wrong check digit/)
    expect(messages(parseRecallCsv('gtin\n095212345000183\n'))[0]).toMatch(/has 15 digits/)
  })

  it('an HIBC barcode pasted as the DI is refused with the DI it probably holds', () => {
    const r = parseRecallCsv('hibcc_di\n+A999HE1050T\n')
    expect(messages(r)[0]).toMatch(/is the whole barcode.*probably A999HE1050/)
  })
})

describe('field checks', () => {
  it('checkGtin agrees with the gtin package on random digit strings', () => {
    fc.assert(fc.property(fc.constantFrom(8, 12, 13, 14), fc.nat(), (len, seed) => {
      const digits = String(seed).padStart(len, '7').slice(-len)
      let pkg: boolean
      try { pkg = gtinPackageIsValid(digits) } catch { pkg = false }
      expect(checkGtin(digits).ok).toBe(pkg)
    }), { numRuns: 2000 })
  })

  it('checkHibccDi structure (ANSI/HIBC 2.6 via standards.md A2.1)', () => {
    expect(checkHibccDi('A999ABC1230')).toEqual({ ok: true, value: 'A999ABC1230' }) // A2.1 GUDID example DI
    expect(checkHibccDi('1999ABC1230').ok).toBe(false) // LIC starts with a letter
    expect(checkHibccDi('A999ABC123X').ok).toBe(false) // ends with the U/M digit
    expect(checkHibccDi('A9990').ok).toBe(false) // too short: LIC + ≥1 PCN + U/M = 6
    expect(checkHibccDi(`A999${'B'.repeat(19)}0`).ok).toBe(false) // 24 > 23
    expect(checkHibccDi('A999-ABC-1230').ok).toBe(false)
  })

  it('checkLotOrSerial and checkIsoDate edges', () => {
    expect(checkLotOrSerial('abc-xyz_1', 'lot', 'GS1').ok).toBe(true) // lower case is CSET 82 (A1.2)
    expect(checkLotOrSerial('abc', 'lot', 'HIBCC').ok).toBe(false)
    expect(checkLotOrSerial('AB$/+%.-1', 'lot', 'HIBCC').ok).toBe(true)
    expect(checkLotOrSerial('AB$1', 'lot', 'GS1').ok).toBe(false)
    expect(checkIsoDate('2026-02-29', 'x').ok).toBe(false)
    expect(checkIsoDate('2000-02-29', 'x').ok).toBe(true) // divisible by 400
    expect(checkIsoDate('1900-02-29', 'x').ok).toBe(false) // divisible by 100
  })
})

describe('matchRecallRow', () => {
  const rows = parseRecallCsv('gtin,lot,serial,expiry_from,expiry_to\n09521234500018,FH2601A,,,\n09521234500025,,,2026-01-01,2026-06-30\n09521234500032,,,,\n').rows
  it('AND of the given criteria; DI alone matches every unit; missing unit data is "unknown", never "no"', () => {
    expect(matchRecallRow(rows[0]!, { gtin: '9521234500018', lot: 'FH2601A' })).toBe('match')
    expect(matchRecallRow(rows[0]!, { gtin: '09521234500018', lot: 'FH2601B' })).toBe('no')
    expect(matchRecallRow(rows[0]!, { gtin: '09521234500018', lot: null })).toBe('unknown')
    expect(matchRecallRow(rows[1]!, { gtin: '09521234500025', expiry: '2026-06-30' })).toBe('match')
    expect(matchRecallRow(rows[1]!, { gtin: '09521234500025', expiry: '2026-07-01' })).toBe('no')
    expect(matchRecallRow(rows[1]!, { gtin: '09521234500025' })).toBe('unknown')
    expect(matchRecallRow(rows[2]!, { gtin: '09521234500032', lot: 'ANY' })).toBe('match')
    expect(matchRecallRow(rows[2]!, { gtin: '09521234500018' })).toBe('no')
  })
})

describe('never throws', () => {
  const csvish = fc.array(
    fc.oneof(
      fc.constantFrom(',', ';', '\t', '"', '""', '\n', '\r\n', '\r', '\uFEFF', ' ', 'gtin', 'lot', 'serial', 'expiry_from', 'expiry_to', 'note', 'hibcc_di',
        '09521234500018', '2026-02-30', '2027-01-01', '+A999HE1050T', 'A999HE1050', '9.5E+12', '__parsed_extra', 'lot_1', '\u0000', '\u001D'),
      fc.string({ maxLength: 8 }),
      fc.string({ unit: 'grapheme', maxLength: 4 }),
    ),
    { maxLength: 60 },
  ).map((parts) => parts.join(''))

  it('random CSV-ish text gives a well-formed result', () => {
    fc.assert(fc.property(csvish, (text) => {
      const r = parseRecallCsv(text)
      expect(Array.isArray(r.rows) && Array.isArray(r.errors) && Array.isArray(r.columns)).toBe(true)
      for (const e of r.errors) {
        expect(Number.isInteger(e.row) && e.row >= 0).toBe(true)
        expect(typeof e.message).toBe('string')
        expect(e.message.length).toBeGreaterThan(0)
      }
      // a row is either accepted or reported, never both
      const bad = new Set(r.errors.filter((e) => e.row > 0).map((e) => e.row))
      for (const row of r.rows) {
        expect(bad.has(row.row)).toBe(false)
        expect(row.gtin !== null || row.hibccDi !== null).toBe(true)
      }
    }), { numRuns: 1500 })
  })

  it('also for non-string input', () => {
    expect(parseRecallCsv(undefined as unknown as string).errors).toHaveLength(1)
    expect(parseRecallCsv(42 as unknown as string).errors).toHaveLength(1)
  })
})
