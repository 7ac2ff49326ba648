/**
 * Item master import: column mapping guesses, a good file, a file of bad rows (each reported
 * with its row and reason), streaming a generated 20,000-row file through papaparse, and a
 * property test that no row makes the validator throw. Data invented: maker "Fernhollow Medical
 * (demo)", GTINs on GS1 demo prefix 952 (standards.md A1.8), HIBC LIC A999 (A2.1 examples).
 */
import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import Papa from 'papaparse'
import { isValid as gtinPackageIsValid } from 'gtin'
import { gtinCheckDigit } from '../../../../shared/utils/udi'
import {
  CATALOG_FIELDS,
  CATALOG_FIELD_LABELS,
  CATALOG_PAPA_CONFIG,
  createCatalogValidator,
  guessMapping,
  mappingProblems,
  parseDecimal,
  validateCatalogRow,
  validateCatalogRows,
  type CatalogItemInput,
  type CatalogMapping,
} from '../../../../shared/utils/catalog-csv'

const gtin = (n: number) => {
  const body = `0952${String(n).padStart(9, '0')}` // GS1 prefix 952: demonstrations and examples (A1.8)
  return body + String(gtinCheckDigit(body))
}

function readCsv(text: string): { headers: string[]; rows: Record<string, string>[] } {
  const r = Papa.parse<Record<string, string>>(text, { ...CATALOG_PAPA_CONFIG })
  return { headers: r.meta.fields ?? [], rows: r.data }
}

const GOOD = [
  'Kind,Description,Manufacturer,REF,GTIN,HIBC DI,Diameter (mm),Length,CCD angle,Side,Nail type,Material,Price,Implant card',
  `nail,"Trochanteric nail, short, 11 mm × 200 mm, 130°",Fernhollow Medical (demo),FH-NS-0001,${gtin(1)},,11,200 mm,130°,,short,Titanium alloy,"780,00",yes`,
  `Nail,"Trochanteric nail, long, left, 10 mm × 380 mm, 125°",Fernhollow Medical (demo),FH-NL-0002,${gtin(2).slice(1)},,"10,0",380,125,Left,long,Titanium alloy,1180.00,true`,
  `lag screw,Head element 100 mm,Fernhollow Medical (demo),FH-HE-0100,,A999HE1000,10.5,100,,,,Titanium alloy,210,no`,
  `locking screw,Distal locking screw 5 mm × 40 mm,Fernhollow Medical (demo),FH-DS-0040,${gtin(3)},,5,40,,,,Titanium alloy,€45.50,0`,
  `set_screw,Set screw,Fernhollow Medical (demo),FH-SS-0001,${gtin(4)},,,,,,,,12,`,
  `End cap,End cap 0 mm,Fernhollow Medical (demo),FH-EC-0000,${gtin(5)},A999EC0000,,,,,,,"1 180,00",1`,
].join('\n')

describe('CATALOG_FIELDS and guessMapping', () => {
  it('lists every field of the catalog table once, with a label', () => {
    expect(CATALOG_FIELDS.map((f) => f.key)).toEqual([
      'kind', 'description', 'maker', 'reference', 'gtin', 'hibcc_di', 'diameter_mm', 'length_mm', 'angle_deg', 'side', 'nail_type', 'material', 'unit_cost', 'implant_card',
    ])
    for (const f of CATALOG_FIELDS) expect(CATALOG_FIELD_LABELS[f.key].length).toBeGreaterThan(0)
  })

  it('guesses common spellings, case- and space-insensitively', () => {
    expect(guessMapping([' Description ', 'GTIN', 'Diameter (mm)', 'LENGTH', 'CCD angle', 'Price', 'Type', 'Nail Type', 'manufacturer', 'Ref', 'HIBCC DI', 'side', 'Implant card', 'Material', 'Colour'])).toEqual({
      ' Description ': 'description', GTIN: 'gtin', 'Diameter (mm)': 'diameter_mm', LENGTH: 'length_mm', 'CCD angle': 'angle_deg',
      Price: 'unit_cost', Type: 'kind', 'Nail Type': 'nail_type', manufacturer: 'maker', Ref: 'reference', 'HIBCC DI': 'hibcc_di',
      side: 'side', 'Implant card': 'implant_card', Material: 'material', Colour: null,
    })
    expect(guessMapping(['Neck-shaft angle', 'Cost', 'length_mm', 'diameter [mm]', 'Kind'])).toEqual({
      'Neck-shaft angle': 'angle_deg', Cost: 'unit_cost', length_mm: 'length_mm', 'diameter [mm]': 'diameter_mm', Kind: 'kind',
    })
  })

  it('gives a field to the first header only; the second stays unmapped', () => {
    expect(guessMapping(['CCD angle', 'Neck-shaft angle', 'Price', 'Cost'])).toEqual({
      'CCD angle': 'angle_deg', 'Neck-shaft angle': null, Price: 'unit_cost', Cost: null,
    })
  })

  it('mappingProblems: missing kind/description/DI and a field mapped twice', () => {
    expect(mappingProblems({ A: 'kind', B: 'description', C: 'gtin' })).toEqual([])
    expect(mappingProblems({ C: 'gtin' }).map((e) => e.message)).toEqual([
      'No column is mapped to Kind. Choose the column that holds it.',
      'No column is mapped to Description. Choose the column that holds it.',
    ])
    expect(mappingProblems({ A: 'kind', B: 'description' })[0]!.message).toMatch(/No column is mapped to GTIN or HIBCC DI/)
    expect(mappingProblems({ A: 'kind', B: 'description', C: 'gtin', D: 'gtin' })).toEqual([
      { row: 0, column: 'D', message: 'Columns “C” and “D” are both mapped to GTIN. Map only one of them.' },
    ])
  })
})

describe('validateCatalogRows: a good file', () => {
  it('turns every row into an item with the table’s types', () => {
    const { headers, rows } = readCsv(GOOD)
    const mapping = guessMapping(headers)
    const r = validateCatalogRows(rows, mapping)
    expect(r.errors).toEqual([])
    expect(r.items).toHaveLength(6)
    const [nail, longNail, head, distal, setScrew, cap] = r.items as [CatalogItemInput, CatalogItemInput, CatalogItemInput, CatalogItemInput, CatalogItemInput, CatalogItemInput]
    expect(nail).toEqual<CatalogItemInput>({
      row: 1, kind: 'nail', description: 'Trochanteric nail, short, 11 mm × 200 mm, 130°', maker: 'Fernhollow Medical (demo)',
      reference: 'FH-NS-0001', gtin: gtin(1), hibcc_di: null, diameter_mm: 11, length_mm: 200, angle_deg: 130, side: null,
      nail_type: 'short', material: 'Titanium alloy', unit_cost: 780, implant_card: true,
    })
    expect(longNail).toMatchObject({ gtin: gtin(2), side: 'left', nail_type: 'long', diameter_mm: 10, unit_cost: 1180 }) // GTIN-13 padded to 14
    expect(head).toMatchObject({ kind: 'head_element', gtin: null, hibcc_di: 'A999HE1000', length_mm: 100, diameter_mm: 10.5, implant_card: false })
    expect(distal).toMatchObject({ kind: 'distal_screw', length_mm: 40, unit_cost: 45.5, implant_card: false })
    expect(setScrew).toMatchObject({ kind: 'set_screw', length_mm: null, material: '', unit_cost: 12, implant_card: false })
    expect(cap).toMatchObject({ kind: 'end_cap', gtin: gtin(5), hibcc_di: 'A999EC0000', unit_cost: 1180, implant_card: true })
    for (const i of r.items) if (i.gtin) expect(gtinPackageIsValid(i.gtin)).toBe(true)
  })

  it('numbers: decimal comma, unit suffix, grouping; ambiguous or foreign units refused', () => {
    const ok = (s: string, u: 'mm' | 'deg' | 'money' | null = 'mm') => { const p = parseDecimal(s, u); return p.ok ? p.value : null }
    expect(['11,5', '11.5 mm', '11.5mm', ' 11.5 '].map((s) => ok(s))).toEqual([11.5, 11.5, 11.5, 11.5])
    expect(ok('130°', 'deg')).toBe(130)
    expect(['1,180.00', '1.180,00', '1 180,00', 'EUR 1180', '$99'].map((s) => ok(s, 'money'))).toEqual([1180, 1180, 1180, 1180, 99])
    expect(ok('1,180', 'money')).toBeNull() // thousands or decimals? (common practice: refuse, ask)
    expect(ok('12 cm')).toBeNull()
    expect(ok('1e3')).toBeNull()
    expect(ok('11.5 mm', 'deg')).toBeNull()
  })
})

describe('validateCatalogRows: bad rows, each reported with row number and reason', () => {
  const H = 'kind,description,gtin,hibcc_di,diameter_mm,length_mm,angle_deg,side,nail_type,unit_cost,implant_card'
  const lines = [
    /* 1 ok        */ `nail,Nail A,${gtin(10)},,11,200,130,,short,,yes`,
    /* 2 check dig */ `nail,Nail B,09521234500019,,11,200,130,,short,,yes`,
    /* 3 no DI     */ `distal_screw,Screw C,,,5,40,,,,,`,
    /* 4 nail gaps */ `nail,Nail D,${gtin(11)},,,,130,,,,`,
    /* 5 head len  */ `lag screw,Head E,${gtin(12)},,,,,,,,`,
    /* 6 kind      */ `plate,Plate F,${gtin(13)},,,,,,,,`,
    /* 7 numbers   */ `nail,Nail G,${gtin(14)},,"1,180",20 cm,300,,short,abc,maybe`,
    /* 8 side/type */ `nail,Nail H,${gtin(15)},,11,200,130,up,medium,,`,
    /* 9 dup GTIN  */ `nail,Nail I,${gtin(10).slice(1)},,12,200,130,,short,,`,
    /* 10 HIBC     */ `end_cap,Cap J,,+A999EC0000X,,,,,,,`,
    /* 11 descr    */ `set_screw,,${gtin(16)},,,,,,,,`,
    /* 12 nt screw */ `distal_screw,Screw K,${gtin(17)},,5,40,,,short,,`,
    /* 13 dup HIBC */ `end_cap,Cap L,,A999EC0005,,,,,,,`,
    /* 14 dup HIBC */ `end_cap,Cap M,${gtin(18)},A999EC0005,,,,,,,`,
  ]
  const { headers, rows } = readCsv([H, ...lines].join('\r\n'))
  const r = validateCatalogRows(rows, guessMapping(headers))
  const at = (n: number) => r.errors.filter((e) => e.row === n)

  it('only the good rows become items', () => {
    expect(r.items.map((i) => i.row)).toEqual([1, 13])
  })

  it('GTIN check digit (GS1 General Specifications, standards.md A1.5)', () => {
    expect(at(2)).toEqual([{ row: 2, column: 'gtin', message: "Row 2: GTIN 09521234500019 has a wrong check digit (should end in 8). Copy it again from the label or the supplier's list." }])
  })

  it('a DI is required (it is the upsert key)', () => {
    expect(at(3).map((e) => e.message)).toEqual(['Row 3: no GTIN and no HIBCC DI. Every item needs its device identifier from the label.'])
  })

  it('a nail needs diameter, length, angle and nail type; a head element its length (catalog_items CHECKs)', () => {
    expect(at(4).map((e) => e.message)).toEqual(['Row 4: a nail needs diameter, length, nail_type (short or long). Fill in these columns.'])
    expect(at(5)).toEqual([{ row: 5, column: 'length_mm', message: 'Row 5: a head element needs its length in mm.' }])
  })

  it('unknown kind, unreadable numbers and yes/no', () => {
    expect(at(6)[0]!.message).toMatch(/^Row 6: kind “plate” is not one we know/)
    expect(at(7).map((e) => e.column)).toEqual(['diameter_mm', 'length_mm', 'angle_deg', 'unit_cost', 'implant_card'])
    expect(at(7)[0]!.message).toMatch(/diameter “1,180” is ambiguous/)
    expect(at(7)[1]!.message).toMatch(/length “20 cm” must be in millimetres/)
    expect(at(7)[2]!.message).toMatch(/angle “300” is outside 90–170 °/)
    expect(at(7)[4]!.message).toMatch(/implant_card “maybe” must be yes or no/)
  })

  it('side and nail type values; nail type only on nails', () => {
    expect(at(8).map((e) => e.column)).toEqual(['side', 'nail_type'])
    expect(at(12)[0]!.message).toMatch(/nail_type is only for nails/)
  })

  it('duplicate DI names both rows — also when the GTIN is written shorter', () => {
    expect(at(9)).toEqual([{ row: 9, column: 'gtin', message: `Row 9: GTIN ${gtin(10)} is also on row 1. Each item may appear once; delete or correct one of the two rows.` }])
    expect(at(14)).toEqual([{ row: 14, column: 'hibcc_di', message: 'Row 14: HIBCC DI A999EC0005 is also on row 13. Each item may appear once; delete or correct one of the two rows.' }])
  })

  it('a pasted HIBC barcode and an empty description', () => {
    expect(at(10)[0]!.message).toMatch(/is the whole barcode/)
    expect(at(11)[0]).toMatchObject({ column: 'description', message: expect.stringMatching(/description is empty/) })
  })

  it('a broken mapping is reported alone (row 0), before any row', () => {
    const bad = validateCatalogRows(rows, { kind: 'kind', gtin: 'gtin' })
    expect(bad.items).toEqual([])
    expect(bad.errors.every((e) => e.row === 0)).toBe(true)
    expect(validateCatalogRows([], guessMapping(headers)).errors[0]!.message).toMatch(/no item rows/)
  })
})

describe('streaming', () => {
  const mapping: CatalogMapping = guessMapping(['kind', 'description', 'maker', 'gtin', 'diameter_mm', 'length_mm', 'angle_deg', 'side', 'nail_type', 'unit_cost', 'implant_card'])

  function bigFile(n: number): string {
    const out = ['kind,description,maker,gtin,diameter_mm,length_mm,angle_deg,side,nail_type,unit_cost,implant_card']
    for (let i = 1; i <= n; i++) {
      const k = i % 3
      if (k === 0) out.push(`nail,"Nail ${i}, 11 mm × 200 mm",Fernhollow Medical (demo),${gtin(i)},11,200,130,${i % 2 ? 'left' : 'right'},long,"1180,00",yes`)
      else if (k === 1) out.push(`head_element,Head element ${i},Fernhollow Medical (demo),${gtin(i)},10.5,${80 + (i % 40)},,,,210,no`)
      else out.push(`distal_screw,Distal screw ${i},Fernhollow Medical (demo),${gtin(i)},5,${30 + (i % 50)} mm,,,,45.5,0`)
    }
    // three planted problems
    out[5000] = out[5000]!.replace(/,0952\d{10},/, ',09521234500019,') // wrong check digit
    out[12000] = `nail,Nail without sizes,Fernhollow Medical (demo),${gtin(999_000)},,,,,,,`
    out.push(out[1]!) // duplicate of row 1
    return out.join('\n')
  }

  it('validates a generated 20,000-row file row by row from papaparse step callbacks', () => {
    const text = bigFile(20_000)
    const v = createCatalogValidator(mapping)
    const errors: { row: number; message: string }[] = []
    let items = 0
    Papa.parse<Record<string, string>>(text, {
      ...CATALOG_PAPA_CONFIG,
      step: (res) => {
        const r = v.push(res.data)
        if (r.item) items++
        errors.push(...r.errors)
      },
    })
    expect(v.counts.rows).toBe(20_001)
    expect(errors.map((e) => e.row)).toEqual([5000, 12000, 20_001])
    expect(errors[2]!.message).toMatch(/is also on row 1\./)
    expect(items).toBe(20_001 - 3)
    expect(v.counts.items).toBe(items)
  })

  it('validateCatalogRow alone is stateless (no duplicate check) and takes the caller’s row number', () => {
    const row = { kind: 'end_cap', description: 'End cap', gtin: gtin(7) }
    const m: CatalogMapping = { kind: 'kind', description: 'description', gtin: 'gtin' }
    expect(validateCatalogRow(row, m, 41).item?.row).toBe(41)
    expect(validateCatalogRow(row, m, 42).item?.row).toBe(42)
    expect(validateCatalogRow({ ...row, gtin: '123' }, m, 43).errors[0]!.message).toMatch(/^Row 43: GTIN 123 has 3 digits/)
  })
})

describe('never throws', () => {
  it('random rows and mappings give results, not exceptions', () => {
    const fieldOrNull = fc.option(fc.constantFrom(...CATALOG_FIELDS.map((f) => f.key)), { nil: null })
    const value = fc.oneof(fc.string({ maxLength: 12 }), fc.constantFrom('nail', 'lag screw', '11,5', '1,180', '09521234500018', 'A999HE1000', 'yes', 'left', 'short', ''))
    fc.assert(fc.property(
      fc.dictionary(fc.string({ maxLength: 6 }), fieldOrNull, { maxKeys: 8 }),
      fc.array(fc.dictionary(fc.string({ maxLength: 6 }), value, { maxKeys: 8 }), { maxLength: 5 }),
      (mapping, rows) => {
        const r = validateCatalogRows(rows, mapping)
        for (const e of r.errors) expect(typeof e.message).toBe('string')
        for (const i of r.items) expect(i.gtin !== null || i.hibcc_di !== null).toBe(true)
      },
    ), { numRuns: 1000 })
  })
})
