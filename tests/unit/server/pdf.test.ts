/**
 * The PDF chart copy and the patient implant card, read back the way a person and a scanner would:
 * pdftotext for the words, pdftoppm + zxing for the DataMatrix symbols, pdffonts/pdf-lib for the
 * file itself. Everything here is invented (demo hospital, demo maker, GS1 demo prefix 952).
 *
 * Sources are named beside the checks: "standards.md" / "trade.md" are the project's fact sheets.
 */
import { execFileSync } from 'node:child_process'
import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { PDFDocument } from 'pdf-lib'
import { PNG } from 'pngjs'
import { isValid as gtinIsValid } from 'gtin'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { decodePng } from '../../helpers/barcodes'
import { parseUdi } from '../../../shared/utils/udi'
import { buildRecord, recordHash, type CaseRecord, type CaseSnapshot } from '../../../shared/utils/record'
import { PRINT_BOX, renderRecordPdf, type RecordPdfLayout, type RecordSignature } from '../../../server/utils/pdf/record-pdf'
import { CARD_SIZE, cardEligible, renderImplantCard } from '../../../server/utils/pdf/implant-card'

const MM = 72 / 25.4
const GS = '\u001D'

// ---------------------------------------------------------------------------------------------
// Invented data
// ---------------------------------------------------------------------------------------------

/** GS1 mod-10 check digit: weights 3,1 from the right (standards.md A1.5). */
function gs1Check(body: string): string {
  let sum = 0
  for (let i = body.length - 1, pos = 1; i >= 0; i--, pos++) sum += Number(body[i]) * (pos % 2 === 1 ? 3 : 1)
  return String((10 - (sum % 10)) % 10)
}
const gtin = (n: number) => {
  const body = `095212345${String(n).padStart(4, '0')}` // GS1 prefix 952: demonstrations (standards.md A1.8)
  return body + gs1Check(body)
}

/** HIBC mod-43 check character (standards.md A2.4 value table). */
function mod43(s: string): string {
  const set = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ-. $/+%'
  let sum = 0
  for (const ch of s) sum += set.indexOf(ch)
  return set.charAt(sum % 43)
}

const MAKER = { name: 'Fernhollow Medical (demo)', address: '1 Example Quay, Demo Town, DM1 0AA', website: 'https://fernhollow.example' }
const INSTITUTION = 'Ferncliff General Hospital (demo), 10 Harbour Road, Demo Town DM2 0BB'
const yymmdd = (iso: string) => iso.slice(2, 4) + iso.slice(5, 7) + iso.slice(8, 10)

type Item = CaseSnapshot['items'][number]
function gs1Item(id: number, n: number, kind: string, description: string, lot: string, serial: string | null, expiry: string, at: string, extra: Partial<Item> = {}): Item {
  const g = gtin(n)
  return {
    id, description, kind, maker: MAKER, issuer: 'GS1', di: g, lot, serial, expiry, manufactured: null,
    hri: `(01)${g}(17)${yymmdd(expiry)}(10)${lot}${serial ? `(21)${serial}` : ''}`,
    source: 'camera', disposition: 'implanted', wasteReason: null, wasteNote: null,
    recordedBy: 'Tomás Ferreira', recordedAt: at, checks: [], implantCard: kind === 'nail', ...extra,
  }
}
function hibcItem(id: number, primary: string, lot: string, description: string, at: string): Item {
  const data = `+${primary}/$$3271130${lot}` // combined primary/secondary, $$3 = YYMMDD expiry (standards.md A2.2–A2.3)
  return {
    id, description, kind: 'other', maker: MAKER, issuer: 'HIBCC', di: primary, lot, serial: null, expiry: '2027-11-30', manufactured: null,
    hri: data + mod43(data), source: 'manual', disposition: 'explanted', wasteReason: null, wasteNote: null,
    recordedBy: 'Tomás Ferreira', recordedAt: at, checks: [], implantCard: false,
  }
}

const SURGEON = 'Henrike Szabó-Lindqvist'
const d = (component: 'nail' | 'head_element' | 'distal_screw', slot: number, proposed: [number, string], chosen: [number, string], at: string,
  more: Partial<CaseSnapshot['decisions'][number]> = {}): CaseSnapshot['decisions'][number] => ({
  component, slot, proposed: { itemId: proposed[0], description: proposed[1] }, chosen: { itemId: chosen[0], description: chosen[1] },
  reason: null, reasons: [], warnings: [], guideAcknowledged: false, decidedBy: SURGEON, decidedAt: at, ...more,
})
const r = (id: number, kind: string, slot: number, value: string, unit: 'mm' | 'deg', by: string, at: string, supersedesId: number | null = null) =>
  ({ id, kind, slot, value, unit, enteredBy: by, enteredAt: at, supersedesId })

const NAIL = 'Trochanteric nail, long, right, 11 mm × 380 mm, 130°'
const DS = (l: number) => `Distal locking screw 5.0 mm × ${l} mm`

function demoSnapshot(): CaseSnapshot {
  return {
    facility: { name: 'Ferncliff General Hospital (demo)', timeZone: 'America/New_York' },
    case: { id: 1042, procedure: 'long_nail', side: 'right', theatre: 'OR 3',
      scheduledAt: '2026-11-30T13:00:00Z', openedAt: '2026-11-30T13:12:00Z', closedAt: '2026-11-30T15:02:00Z' },
    patient: { mrn: 'FGH-0048213', familyName: 'Åkesson-Dubois', givenName: 'Margit', birthDate: '1941-03-07', sex: 'female' },
    team: { surgeon: { id: 7, name: SURGEON }, circulator: { id: 8, name: 'Tomás Ferreira' }, scrub: { id: 9, name: 'Joaquim Groß' } },
    ruleProfile: { version: 3, nailClearanceMm: 1, distalScrewRounding: 'up', tadLimitMm: 25 },
    readings: [
      r(1, 'reamed_diameter', 0, '12.50', 'mm', 'Tomás Ferreira', '2026-11-30T13:31:00Z'),
      r(12, 'reamed_diameter', 0, '12.00', 'mm', 'Joaquim Groß', '2026-11-30T13:34:00Z', 1),
      r(2, 'nail_length', 0, '385.00', 'mm', 'Tomás Ferreira', '2026-11-30T13:36:00Z'),
      r(3, 'native_angle', 0, '131.00', 'deg', SURGEON, '2026-11-30T13:20:00Z'),
      r(4, 'head_element_length', 0, '98.00', 'mm', 'Tomás Ferreira', '2026-11-30T13:52:00Z'),
      r(5, 'head_compression', 0, '3.00', 'mm', 'Tomás Ferreira', '2026-11-30T13:52:30Z'),
      r(6, 'distal_depth', 1, '39.00', 'mm', 'Joaquim Groß', '2026-11-30T14:10:00Z'),
      r(7, 'distal_depth', 2, '43.00', 'mm', 'Joaquim Groß', '2026-11-30T14:16:00Z'),
      r(13, 'distal_depth', 2, '41.00', 'mm', 'Joaquim Groß', '2026-11-30T14:18:00Z', 7),
      r(8, 'distal_depth', 3, '35.00', 'mm', 'Joaquim Groß', '2026-11-30T14:24:00Z'),
      r(9, 'distal_depth', 4, '37.00', 'mm', 'Joaquim Groß', '2026-11-30T14:29:00Z'),
      r(10, 'tad_ap_tip_apex', 0, '12.40', 'mm', SURGEON, '2026-11-30T14:02:00Z'),
      r(11, 'tad_lat_tip_apex', 0, '11.10', 'mm', SURGEON, '2026-11-30T14:03:00Z'),
    ],
    decisions: [
      d('nail', 0, [501, NAIL], [501, NAIL], '2026-11-30T13:40:00Z', {
        guideAcknowledged: true,
        reasons: ['Diameter 11 mm: largest stocked nail at or below the last reamer 12.0 mm minus 1.0 mm clearance.',
          'Length 380 mm: stocked length at or just below the reading of 385 mm.', 'Angle 130°: stocked angle nearest the native 131°.'],
        warnings: [{ code: 'angle_below_native', message: 'The nail angle 130° is below the native neck-shaft angle 131°.',
          source: 'Parry JA et al., J Orthop Trauma 2018;32:174–7', acknowledgedBy: SURGEON, acknowledgedAt: '2026-11-30T13:41:00Z' }],
      }),
      d('head_element', 0, [601, 'Head element (lag screw) 10.5 mm × 95 mm'], [601, 'Head element (lag screw) 10.5 mm × 95 mm'], '2026-11-30T13:55:00Z',
        { reasons: ['Largest stocked length at or below the reading 98 mm minus 3 mm compression.'] }),
      d('distal_screw', 1, [704, DS(40)], [704, DS(40)], '2026-11-30T14:11:00Z', { reasons: ['Shortest stocked screw at or above the depth 39 mm.'] }),
      d('distal_screw', 2, [705, DS(42)], [705, DS(42)], '2026-11-30T14:19:00Z', { reasons: ['Shortest stocked screw at or above the depth 41 mm.'] }),
      d('distal_screw', 3, [702, DS(36)], [703, DS(38)], '2026-11-30T14:25:00Z', {
        reason: 'Far cortex looks thin on the lateral image; one step longer for purchase.', reasons: ['Shortest stocked screw at or above the depth 35 mm.'] }),
      d('distal_screw', 4, [703, DS(38)], [703, DS(38)], '2026-11-30T14:30:00Z', { reasons: ['Shortest stocked screw at or above the depth 37 mm.'] }),
    ],
    tad: { tadMm: 23.04, overLimit: false, limitMm: 25 },
    items: [
      hibcItem(101, 'A999FHCS650', 'FHC2701', 'Cannulated screw 6.5 mm × 90 mm (earlier fixation)', '2026-11-30T13:18:00Z'),
      hibcItem(102, 'A999FHCS600', 'FHC2702', 'Cannulated screw 6.5 mm × 60 mm (earlier fixation)', '2026-11-30T13:19:00Z'),
      gs1Item(103, 31, 'nail', NAIL, 'FH2611A', 'NL0003817', '2031-10-31', '2026-11-30T13:42:00Z'),
      gs1Item(104, 52, 'head_element', 'Head element (lag screw) 10.5 mm × 95 mm', 'FH2610H', 'HE0009514', '2030-06-30', '2026-11-30T13:57:00Z'),
      gs1Item(105, 77, 'set_screw', 'Set screw for head element', 'FH2609S', null, '2030-09-30', '2026-11-30T14:00:00Z', { source: 'wedge' }),
      gs1Item(106, 64, 'distal_screw', DS(40), 'FH2611D', null, '2031-01-31', '2026-11-30T14:12:00Z'),
      gs1Item(107, 66, 'distal_screw', DS(44), 'FH2611H', null, '2031-01-31', '2026-11-30T14:20:00Z', {
        disposition: 'wasted', wasteReason: 'wrong_size', wasteNote: 'Opened before the depth was re-measured.',
        checks: [{ code: 'size_differs', message: 'Size differs from the confirmed size (42 mm).', acknowledgedBy: 'Joaquim Groß', acknowledgedAt: '2026-11-30T14:20:30Z' }] }),
      gs1Item(108, 65, 'distal_screw', DS(42), 'FH2611E', null, '2031-01-31', '2026-11-30T14:21:00Z'),
      gs1Item(109, 63, 'distal_screw', DS(38), 'FH2611F', 'DS0000109', '2031-01-31', '2026-11-30T14:26:00Z'),
      gs1Item(110, 63, 'distal_screw', DS(38), 'FH2611F', 'DS0000110', '2031-01-31', '2026-11-30T14:27:00Z', { disposition: 'wasted', wasteReason: 'dropped' }),
      gs1Item(111, 63, 'distal_screw', DS(38), 'FH2611G', null, '2031-01-31', '2026-11-30T14:31:00Z', { source: 'photo' }),
      gs1Item(112, 81, 'end_cap', 'End cap, extension 5 mm', 'FH2608C', null, '2030-12-31', '2026-11-30T14:48:00Z'),
    ],
    warnings: [{ code: 'explant_recorded', message: 'Two screws from an earlier operation were removed; their UDIs were typed from the earlier record.',
      acknowledgedBy: SURGEON, acknowledgedAt: '2026-11-30T13:25:00Z' }],
  }
}

const META1 = { version: 1, previousVersionHash: null, addendumReason: null }
const ATTESTATION = 'I have reviewed this record. The implants listed were implanted in, or removed from, this patient as recorded, and the sizes were chosen as stated.'

// ---------------------------------------------------------------------------------------------
// Reading the output back
// ---------------------------------------------------------------------------------------------

let dir = ''
const pdftotext = (file: string, args: string[] = ['-layout']) => execFileSync('pdftotext', [...args, file, '-'], { encoding: 'utf8' })
const flat = (s: string) => s.replace(/\s+/g, ' ')

/** Render PDF pages to PNG with poppler; returns the files in page order. */
function pdftoppm(file: string, dpi: number, prefix: string): string[] {
  execFileSync('pdftoppm', ['-r', String(dpi), '-png', file, join(dir, prefix)])
  return readdirSync(dir)
    .filter((f) => f.startsWith(`${prefix}-`) && f.endsWith('.png'))
    .sort((a, b) => Number(a.slice(prefix.length + 1, -4)) - Number(b.slice(prefix.length + 1, -4)))
    .map((f) => join(dir, f))
}

/** Cut a rectangle (PDF pt, origin bottom-left) out of a page image rendered at `dpi`. */
function crop(png: PNG, pageHeightPt: number, dpi: number, x: number, y: number, w: number, h: number): Buffer {
  const k = dpi / 72
  const left = Math.max(0, Math.floor(x * k))
  const top = Math.max(0, Math.floor((pageHeightPt - y - h) * k))
  const width = Math.min(png.width - left, Math.ceil(w * k))
  const height = Math.min(png.height - top, Math.ceil(h * k))
  const out = new PNG({ width, height })
  PNG.bitblt(png, out, left, top, width, height, 0, 0)
  return PNG.sync.write(out)
}

/**
 * What zxing reports for a GS1 DataMatrix made from this HRI: a leading GS (FNC1 in first
 * position), AIs and data without parentheses, and a GS after each variable-length field that is
 * not last. Predefined lengths by the AI's first two digits (standards.md A1.3, A1.4, Part B).
 */
function gs1Expected(hri: string): string {
  const fixed = new Set(['00', '01', '02', '03', '04', '11', '12', '13', '14', '15', '16', '17', '18', '19', '20', '31', '32', '33', '34', '35', '36', '41'])
  const parts = [...hri.matchAll(/\((\d{2,4})\)([^(]*)/g)].map((m) => [m[1]!, m[2]!] as const)
  return GS + parts.map(([ai, data], i) => ai + data + (!fixed.has(ai.slice(0, 2)) && i < parts.length - 1 ? GS : '')).join('')
}

/** Light, neutral grey pixels: what a 16 % slate watermark leaves on white paper. */
function watermarkPixels(file: string): number {
  const png = PNG.sync.read(readFileSync(file))
  let n = 0
  for (let p = 0; p < png.data.length; p += 4) {
    const [rr, gg, bb] = [png.data[p]!, png.data[p + 1]!, png.data[p + 2]!]
    if (rr >= 218 && rr <= 240 && gg >= 220 && gg <= 242 && bb >= 222 && bb <= 244 && bb - rr >= 1 && bb - rr <= 8) n++
  }
  return n
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'isthmus-pdf-'))
})

afterAll(() => {
  if (dir) rmSync(dir, { recursive: true, force: true })
})

// ---------------------------------------------------------------------------------------------
// Record PDF
// ---------------------------------------------------------------------------------------------

describe('record PDF', () => {
  let record: CaseRecord
  let hash = ''
  let signature: RecordSignature
  let unsigned: Uint8Array
  let signed: Uint8Array
  let layoutU: RecordPdfLayout
  let layoutS: RecordPdfLayout
  let textU = ''
  let textS = ''
  const files = { unsigned: '', signed: '' }

  beforeAll(async () => {
    record = buildRecord(demoSnapshot(), META1)
    hash = await recordHash(record)
    signature = { signerName: SURGEON, signedAt: '2026-11-30T16:20:00Z', attestation: ATTESTATION, recordHash: hash }
    unsigned = await renderRecordPdf(record, { signature: null, debug: (l) => { layoutU = l } })
    signed = await renderRecordPdf(record, { signature, debug: (l) => { layoutS = l } })
    files.unsigned = join(dir, 'unsigned.pdf')
    files.signed = join(dir, 'signed.pdf')
    writeFileSync(files.unsigned, unsigned)
    writeFileSync(files.signed, signed)
    textU = pdftotext(files.unsigned)
    textS = pdftotext(files.signed)
  }, 120_000)

  it('uses demo GTINs with valid check digits (GS1 mod 10)', () => {
    // GS1 "How to calculate a check digit manually": 629104150021 → 3 (standards.md A1.5)
    expect(gs1Check('629104150021')).toBe('3')
    for (const it of demoSnapshot().items) {
      if (it.issuer === 'GS1') expect(gtinIsValid(it.di!), it.di!).toBe(true) // independent check: gtin package
    }
  })

  it('prints the patient with the name intact (Unicode), MRN, birth date, procedure, side, date, theatre, team', () => {
    for (const t of [textU, textS]) {
      expect(t).toContain('Åkesson-Dubois, Margit')
      expect(t).toContain('FGH-0048213')
      expect(t).toContain('1941-03-07') // 21 CFR 801.18 date format
      expect(t).toContain('Long cephalomedullary nail')
      expect(t).toContain('Right')
      expect(t).toContain('2026-11-30')
      expect(t).toContain('OR 3')
      expect(t).toContain('Henrike Szabó-Lindqvist')
      expect(t).toContain('Joaquim Groß')
      expect(t).toContain('Ferncliff General Hospital (demo)')
    }
  })

  it('prints every lot and serial, expiry dates as YYYY-MM-DD, and waste with its reason', () => {
    for (const it of demoSnapshot().items) {
      expect(textU, `lot of item ${it.id}`).toContain(it.lot!)
      if (it.serial) expect(textU, `serial of item ${it.id}`).toContain(it.serial)
      expect(textU).toContain(it.expiry!) // 21 CFR 801.18 date format
    }
    expect(textU).toContain('Wrong size opened')
    expect(textU).toContain('Dropped')
    expect(flat(textU)).toContain('Opened before the depth')
  })

  it('shows a corrected reading struck through with who corrected it', () => {
    expect(textU).toContain('earlier value')
    expect(textU).toContain('12.5 mm')
    expect(flat(textU)).toMatch(/corrected by Joaquim Groß, 08:34/)
  })

  it('shows sizes with reasons, the change reason, cautions with acknowledgements, TAD and the standing caution', () => {
    const t = flat(pdftotext(files.unsigned, []))
    // wrapped inside a table cell: read line by line
    expect(t).toContain('Reason for the change: Far cortex')
    expect(t).toContain('one step longer for purchase.')
    expect(t).toContain('The nail angle 130° is below the native neck-shaft angle 131°.')
    expect(t).toContain('Aiming guide checked against the nail')
    expect(t).toContain('23.0 mm — within the 25.0 mm limit.') // Baumgaertner 1995 (trade.md §2.1)
    expect(t).toContain('Decision support only. The surgeon decides. Follow the implant\'s instructions for use and local policy.') // trade.md §3.1
    expect(t).toContain('Acknowledged by Joaquim Groß, 09:20')
  })

  it('embeds Inter subset, each weight named with its six-letter tag', () => {
    const fonts = execFileSync('pdffonts', [files.unsigned], { encoding: 'utf8' })
    for (const name of ['Inter-Regular', 'Inter-SemiBold', 'Inter-Bold']) {
      // ISO 32000-1 §9.6.4: a subset font's name begins with six upper-case letters and "+"
      const line = fonts.split('\n').find((l) => new RegExp(`^[A-Z]{6}\\+${name}\\s`).test(l))
      expect(line, name).toBeDefined()
      expect(line!).toMatch(/\byes\s+yes\s+yes\b/) // columns: emb sub uni
    }
    expect(readFileSync(files.unsigned).length).toBeLessThan(120_000) // whole fonts made it ~560 KB
  })

  it('puts "Page x of y", the version and the hash prefix on every page', () => {
    const n = layoutU.pages
    expect(n).toBeGreaterThanOrEqual(3)
    for (let p = 1; p <= n; p++) {
      const page = pdftotext(files.unsigned, ['-layout', '-f', String(p), '-l', String(p)])
      expect(page).toContain(`Page ${p} of ${n}`)
      expect(page).toContain(`version 1`)
      expect(page).toContain(`SHA-256 ${hash.slice(0, 16)}`)
      expect(page).toContain('Åkesson-Dubois, Margit') // each page names the patient
    }
    expect(textU).toContain('Page 1 of')
  })

  it('breaks the implants table across pages and repeats its header', () => {
    const pages = new Set(layoutU.symbols.map((s) => s.page))
    expect(pages.size).toBeGreaterThanOrEqual(2)
    const cont = [...pages].slice(1).map((p) => pdftotext(files.unsigned, ['-layout', '-f', String(p), '-l', String(p)]))
    const withCont = cont.find((t) => t.includes('Implants (continued)'))
    expect(withCont).toBeDefined()
    expect(withCont!).toMatch(/DEVICE\s+DI\s+LOT\s+SERIAL\s+EXPIRY\s+RECORDED\s+UDI/)
  })

  it('draws nothing outside a print box that fits both A4 and US Letter', () => {
    // A4 210 × 297 mm (ISO 216); US Letter 215.9 × 279.4 mm (ANSI/ASME Y14.1). A4 printed centred on
    // Letter keeps 210 × 279.4 mm, from 8.8 mm to 288.2 mm from the top.
    expect(layoutU.pageSize.width).toBeCloseTo(210 * MM, 0)
    expect(layoutU.pageSize.height).toBeCloseTo(297 * MM, 0)
    expect(PRINT_BOX.right - PRINT_BOX.left).toBeLessThanOrEqual(210 * MM)
    expect(PRINT_BOX.top).toBeGreaterThanOrEqual(8.8 * MM)
    expect(PRINT_BOX.bottom).toBeLessThanOrEqual(288.2 * MM)
    for (const layout of [layoutU, layoutS]) {
      expect(layout.extents).toHaveLength(layout.pages)
      for (const e of layout.extents) {
        expect(e.left, `page ${e.page} left`).toBeGreaterThanOrEqual(PRINT_BOX.left - 0.01)
        expect(e.right, `page ${e.page} right`).toBeLessThanOrEqual(PRINT_BOX.right + 0.01)
        expect(e.top, `page ${e.page} top`).toBeGreaterThanOrEqual(PRINT_BOX.top - 0.01)
        expect(e.bottom, `page ${e.page} bottom`).toBeLessThanOrEqual(PRINT_BOX.bottom + 0.01)
      }
    }
  })

  it('signed: prints signer, time, attestation and the full SHA-256; no DRAFT', () => {
    const t = flat(pdftotext(files.signed, []))
    expect(t).toContain(`Signed by ${SURGEON}`)
    expect(t).toContain('2026-11-30 11:20 (America/New_York)')
    expect(t).toContain(ATTESTATION)
    expect(textS).toContain(hash)
    expect(textS).not.toContain('DRAFT')
    expect(textS).not.toContain('Not signed')
  })

  it('unsigned: says "Not signed" and marks every page DRAFT', () => {
    expect(textU).toContain('Not signed')
    expect(textU).toContain(hash)
    for (let p = 1; p <= layoutU.pages; p++) {
      expect(pdftotext(files.unsigned, ['-layout', '-f', String(p), '-l', String(p)]), `page ${p}`).toContain('DRAFT — not signed')
    }
  })

  it('draws the diagonal watermark on every unsigned page, and none on signed pages', () => {
    const u = pdftoppm(files.unsigned, 50, 'wu')
    const s = pdftoppm(files.signed, 50, 'ws')
    expect(u).toHaveLength(s.length)
    u.forEach((file, i) => {
      const diff = watermarkPixels(file) - watermarkPixels(s[i]!)
      expect(diff, `page ${i + 1}`).toBeGreaterThan(1500)
    })
  })

  it('prints each implant UDI as a DataMatrix that scans back to the same UDI', () => {
    const pngs = pdftoppm(files.unsigned, 150, 'p')
    const implants = record.implants
    expect(layoutU.symbols.map((s) => s.itemId).sort()).toEqual(implants.map((i) => i.id).sort())
    const pageImages = pngs.map((f) => PNG.sync.read(readFileSync(f)))
    for (const sym of layoutU.symbols) {
      const it = implants.find((i) => i.id === sym.itemId)!
      const m = 5 // pt of white around the symbol (its quiet zone)
      const buf = crop(pageImages[sym.page - 1]!, layoutU.pageSize.height, 150, sym.x - m, sym.y - m, sym.size + 2 * m, sym.size + 2 * m)
      const decoded = decodePng(buf, 'datamatrix')
      if (it.issuer === 'GS1') {
        expect(decoded, `item ${it.id}`).toBe(gs1Expected(it.hri!)) // standards.md A1.4, Part B (zxing: leading GS)
      } else {
        expect(decoded, `item ${it.id}`).toBe(it.hri) // HIBC: '+' … check character (standards.md A2.3)
      }
      // And the app's own scan parser reads the same lot and serial from it.
      const parsed = parseUdi(decoded, { today: '2026-11-30' })
      expect(parsed.ok, `item ${it.id}`).toBe(true)
      if (parsed.ok) {
        expect(parsed.lot).toBe(it.lot ?? undefined)
        expect(parsed.serial).toBe(it.serial ?? undefined)
        expect(parsed.expiry).toBe(it.expiry)
      }
    }
  }, 60_000)

  it('gives byte-identical output for the same input, with dates from the record, not the clock', async () => {
    const again = await renderRecordPdf(buildRecord(demoSnapshot(), META1), { signature: null })
    expect(Buffer.from(again).equals(Buffer.from(unsigned))).toBe(true)
    const againSigned = await renderRecordPdf(record, { signature })
    expect(Buffer.from(againSigned).equals(Buffer.from(signed))).toBe(true)
    // a different record gives a different file
    const s = demoSnapshot()
    s.readings[2]!.value = '386.00'
    const other = await renderRecordPdf(buildRecord(s, META1), { signature: null })
    expect(Buffer.from(other).equals(Buffer.from(unsigned))).toBe(false)

    const doc = await PDFDocument.load(unsigned, { updateMetadata: false })
    expect(doc.getTitle()).toBe('Implant record, case 1042, version 1')
    expect(doc.getCreator()).toBe('Isthmus')
    expect(doc.getCreationDate()?.toISOString()).toBe('2026-11-30T15:02:00.000Z') // closedAt
    const sdoc = await PDFDocument.load(signed, { updateMetadata: false })
    expect(sdoc.getModificationDate()?.toISOString()).toBe('2026-11-30T16:20:00.000Z') // signedAt
  }, 60_000)

  it('refuses a signature made for a different version of the record', async () => {
    await expect(renderRecordPdf(record, { signature: { ...signature, recordHash: 'f'.repeat(64) } })).rejects.toThrow(/different version/)
  })

  it('wraps long text and still stays inside the print box (addendum, attestation, waste note)', async () => {
    const s = demoSnapshot()
    const long = 'The lot of the end cap was read again from the pack label after the case, because the first entry had been typed from a sticker that was partly torn. '.repeat(6) + 'END-OF-REASON'
    s.items[6]!.wasteNote = 'Opened, then found to be the wrong length for hole two after the depth was measured again with a second gauge. '.repeat(3) + 'END-OF-NOTE'
    const rec = buildRecord(s, { version: 2, previousVersionHash: hash, addendumReason: long })
    const h2 = await recordHash(rec)
    let layout!: RecordPdfLayout
    const pdf = await renderRecordPdf(rec, {
      signature: { signerName: SURGEON, signedAt: '2026-12-01T09:00:00Z', attestation: `${ATTESTATION} `.repeat(4) + 'END-OF-ATTESTATION', recordHash: h2 },
      debug: (l) => { layout = l },
    })
    const file = join(dir, 'long.pdf')
    writeFileSync(file, pdf)
    const t = flat(pdftotext(file, []))
    for (const end of ['END-OF-REASON', 'END-OF-NOTE', 'END-OF-ATTESTATION']) expect(t).toContain(end)
    expect(t).toContain('Addendum: version 2 replaces version 1.')
    expect(t).toContain(hash) // the previous version's hash
    for (const e of layout.extents) {
      expect(e.right).toBeLessThanOrEqual(PRINT_BOX.right + 0.01)
      expect(e.bottom).toBeLessThanOrEqual(PRINT_BOX.bottom + 0.01)
    }
  }, 60_000)

  it('prints "?" with a notice for characters Inter has no glyph for, instead of empty boxes', async () => {
    const s = demoSnapshot()
    s.patient.givenName = 'Margit 山田'
    let layout!: RecordPdfLayout
    const pdf = await renderRecordPdf(buildRecord(s, META1), { signature: null, debug: (l) => { layout = l } })
    expect(layout.missingGlyphs).toEqual(['山', '田'])
    const file = join(dir, 'missing.pdf')
    writeFileSync(file, pdf)
    const t = flat(pdftotext(file, []))
    expect(t).toContain('Åkesson-Dubois, Margit ??')
    expect(t).toContain('Some characters cannot be printed with this font')
  }, 60_000)
})

// ---------------------------------------------------------------------------------------------
// Implant card
// ---------------------------------------------------------------------------------------------

describe('implant card', () => {
  let record: CaseRecord
  let card: Uint8Array
  let file = ''

  beforeAll(async () => {
    record = buildRecord(demoSnapshot(), META1)
    card = await renderImplantCard(record, 103, { institution: INSTITUTION })
    file = join(dir, 'card.pdf')
    writeFileSync(file, card)
  }, 60_000)

  it('is one ID-1 page: 85.6 × 54 mm (ISO/IEC 7810; MDCG 2019-8)', async () => {
    const doc = await PDFDocument.load(card)
    expect(doc.getPageCount()).toBe(1)
    const { width, height } = doc.getPage(0).getSize()
    expect(Math.abs(width - 85.6 * MM)).toBeLessThanOrEqual(0.5)
    expect(Math.abs(height - 54 * MM)).toBeLessThanOrEqual(0.5)
    expect(CARD_SIZE[0]).toBeCloseTo(242.65, 1)
    expect(CARD_SIZE[1]).toBeCloseTo(153.07, 1)
  })

  it('carries device, lot, serial, UDI, manufacturer, patient, date and institution (EU MDR Art. 18(1)(a), 18(2))', () => {
    const t = flat(pdftotext(file, []))
    expect(t).toContain(NAIL)
    expect(t).toContain('Lot FH2611A')
    expect(t).toContain('SN NL0003817')
    expect(t.replace(/ /g, '')).toContain(record.implants.find((i) => i.id === 103)!.hri!)
    expect(t).toContain('Fernhollow Medical (demo)')
    expect(t).toContain('1 Example Quay, Demo Town')
    expect(t).toContain('https://fernhollow.example')
    expect(t).toContain('Åkesson-Dubois, Margit')
    expect(t).toContain('MRN FGH-0048213')
    expect(t).toContain('2026-11-30') // date of implantation, 21 CFR 801.18 format
    expect(t).toContain('Ferncliff General Hospital (demo)')
  })

  it('has a DataMatrix that scans back to the device UDI', async () => {
    let sym: { x: number; y: number; size: number } | null = null
    await renderImplantCard(record, 103, { institution: INSTITUTION, debug: (l) => { sym = l.symbol } })
    expect(sym).not.toBeNull()
    const s = sym! as { x: number; y: number; size: number }
    const [png] = pdftoppm(file, 300, 'card')
    const img = PNG.sync.read(readFileSync(png!))
    const m = 4
    const buf = crop(img, CARD_SIZE[1], 300, s.x - m, s.y - m, s.size + 2 * m, s.size + 2 * m)
    const hri = record.implants.find((i) => i.id === 103)!.hri!
    expect(decodePng(buf, 'datamatrix')).toBe(gs1Expected(hri)) // standards.md A1.4, Part B
  }, 30_000)

  it('is byte-identical when rendered again', async () => {
    const again = await renderImplantCard(record, 103, { institution: INSTITUTION })
    expect(Buffer.from(again).equals(Buffer.from(card))).toBe(true)
  }, 30_000)

  it('is only for implanted devices not exempt under EU MDR Art. 18(3)', () => {
    const base = { kind: 'nail', implantCard: true, disposition: 'implanted' }
    expect(cardEligible(base)).toBe(true)
    // EU MDR Art. 18(3): screws (incl. the lag screw / head element), plates, wires, pins, wedges, clips, connectors
    for (const kind of ['head_element', 'distal_screw', 'set_screw', 'end_cap', 'plate', 'wire', 'pin', 'wedge', 'clip', 'connector', 'cannulated_screw']) {
      expect(cardEligible({ ...base, kind }), kind).toBe(false)
    }
    expect(cardEligible({ ...base, disposition: 'wasted' })).toBe(false)
    expect(cardEligible({ ...base, disposition: 'explanted' })).toBe(false)
    expect(cardEligible({ ...base, implantCard: false })).toBe(false)
    expect(cardEligible({ ...base, kind: 'unmatched' })).toBe(false)
    // from the record: only the nail of this case qualifies
    expect(record.implants.filter(cardEligible).map((i) => i.id)).toEqual([103])
  })

  it('refuses a card for an exempt screw (EU MDR Art. 18(3)) or an item not implanted in this case', async () => {
    await expect(renderImplantCard(record, 104, { institution: INSTITUTION })).rejects.toThrow(/Art\. 18\(3\)/)
    await expect(renderImplantCard(record, 107, { institution: INSTITUTION })).rejects.toThrow(/not an implant/)
    await expect(renderImplantCard(record, 999, { institution: INSTITUTION })).rejects.toThrow(/not an implant/)
  })
})
