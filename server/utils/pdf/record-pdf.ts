/**
 * The PDF chart copy of a case record (DESIGN.md, "The PDF record").
 *
 * A4 portrait, with everything drawn inside a box that also survives printing on US Letter
 * (210 × 279 mm window). Quiet: ink on white; the signal colours only mark warnings. Every page
 * names the patient, so a loose page can be filed back; every page carries "Page x of y", the
 * record version and the start of the record's SHA-256; unsigned versions carry a diagonal
 * "DRAFT — not signed" across each page.
 *
 * Reproducible: no clock and no randomness. The PDF dates come from the record (and signature),
 * so the same input gives the same bytes, which lets a stored copy be re-rendered and compared.
 *
 * Explicit imports only (pdf-lib, fontkit, bwip-js), so this also runs outside Nuxt.
 */
// The node entry explicitly: the package's root export has no condition TypeScript's bundler resolution picks.
import bwipjs from 'bwip-js/node'
import { PDFDocument, PDFPage, PDFFont, rgb, degrees, type RGB } from 'pdf-lib'
import {
  recordHash,
  recordTime,
  type CaseRecord,
  type RecordFinding,
  type RecordItem,
  type RecordTime,
  type RecordUdiSymbol,
} from '../../../shared/utils/record'
import { embedInter, missingGlyphs, type InterFonts } from './fonts'

// ---------------------------------------------------------------------------------------------
// Page geometry and colours
// ---------------------------------------------------------------------------------------------

export const MM = 72 / 25.4
const A4: [number, number] = [595.28, 841.89]

/**
 * All ink stays inside this box (top-down coordinates, pt). Centred A4-on-Letter printing keeps a
 * 279 mm high window from 9 mm to 288 mm; the box leaves 4 mm more for printers' own margins.
 */
export const PRINT_BOX = { left: 16 * MM, right: A4[0] - 16 * MM, top: 13 * MM, bottom: A4[1] - 13 * MM }
const CONTENT_TOP_FIRST = PRINT_BOX.top
const CONTENT_TOP = 22 * MM
const CONTENT_BOTTOM = A4[1] - 22 * MM

const hex = (h: string): RGB => rgb(parseInt(h.slice(1, 3), 16) / 255, parseInt(h.slice(3, 5), 16) / 255, parseInt(h.slice(5, 7), 16) / 255)
export const INK = hex('#12343B')
export const SLATE = hex('#5B6B73')
export const LINE = hex('#D9D3C7')
export const CAUTION = hex('#B7791F')
export const REFUSED = hex('#B3261E')

// ---------------------------------------------------------------------------------------------
// Public API
// ---------------------------------------------------------------------------------------------

export interface RecordSignature { signerName: string; signedAt: string; attestation: string; recordHash: string }

export interface RecordPdfOptions {
  signature: RecordSignature | null
  /** defaults to the record's facility name */
  facilityName?: string
  /** receives where things were drawn (tests use it to find and read the UDI symbols again) */
  debug?: (layout: RecordPdfLayout) => void
}

export interface RecordPdfLayout {
  pageSize: { width: number; height: number }
  pages: number
  printBox: typeof PRINT_BOX
  /** bounding box of everything drawn on each page except the watermark (top-down, pt) */
  extents: { page: number; left: number; right: number; top: number; bottom: number }[]
  /** each UDI symbol, lower-left corner in PDF user space (origin bottom-left), side in pt */
  symbols: { itemId: number; page: number; x: number; y: number; size: number; bcid: string; text: string }[]
  /** characters the font could not print (replaced with "?") */
  missingGlyphs: string[]
  recordHash: string
}

export async function renderRecordPdf(record: CaseRecord, opts: RecordPdfOptions): Promise<Uint8Array> {
  const hash = await recordHash(record)
  const sig = opts.signature
  if (sig && sig.recordHash.toLowerCase() !== hash) {
    // A signature printed under a different record would attest to something it never saw.
    throw new Error('The signature is for a different version of the record (SHA-256 does not match).')
  }

  const doc = await PDFDocument.create({ updateMetadata: false })
  const fonts = await embedInter(doc)
  const facilityName = opts.facilityName ?? record.facility.name
  // Known before layout, so the notice can stand at the top of page 1.
  const missing = missingGlyphs(fonts.regular, JSON.stringify([record, sig, facilityName]))
  const w = new Writer(doc, fonts, record, facilityName, missing, sig === null)

  w.headerBand()
  w.addendumNotice()
  w.readings()
  w.sizing()
  w.implants()
  w.waste()
  w.warnings()
  w.signature(sig, hash)
  w.finish(hash, sig === null)

  const created = pdfDate(record.times.closed ?? record.times.opened ?? record.times.scheduled)
  doc.setTitle(`Implant record, case ${record.caseId}, version ${record.version}`)
  doc.setSubject(`${record.procedure.label}, ${record.side}, ${record.date}`)
  doc.setAuthor(record.facility.name)
  doc.setCreator('Isthmus')
  doc.setProducer('Isthmus')
  doc.setLanguage('en')
  doc.setCreationDate(created)
  doc.setModificationDate(sig ? pdfDate(recordTime(sig.signedAt, record.facility.timeZone, 'signedAt')) : created)

  opts.debug?.({
    pageSize: { width: A4[0], height: A4[1] },
    pages: doc.getPageCount(),
    printBox: PRINT_BOX,
    extents: w.extents.map((e, i) => ({ page: i + 1, ...e })),
    symbols: w.symbols,
    missingGlyphs: [...w.missing].sort(),
    recordHash: hash,
  })
  return doc.save({ useObjectStreams: true })
}

function pdfDate(t: RecordTime): Date {
  return new Date(t.iso)
}

// ---------------------------------------------------------------------------------------------
// Shared drawing helpers (also used by the implant card)
// ---------------------------------------------------------------------------------------------

const widthCache = new WeakMap<PDFFont, Map<string, number>>()

/** Text width in pt. Cached per font at 1 pt, because fontkit's layout is slow and wrapping measures often. */
export function pdfTextWidth(font: PDFFont, text: string, size: number): number {
  let m = widthCache.get(font)
  if (!m) {
    m = new Map()
    widthCache.set(font, m)
  }
  let w = m.get(text)
  if (w === undefined) {
    w = font.widthOfTextAtSize(text, 1000) / 1000
    m.set(text, w)
  }
  return w * size
}

/**
 * Break `text` into lines no wider than `width`. Words longer than a line (hashes, UDIs, web
 * addresses) are split, preferably before "(" or after "/", "-" or ".".
 */
export function pdfWrapText(text: string, font: PDFFont, size: number, width: number): string[] {
  const out: string[] = []
  const fits = (s: string) => pdfTextWidth(font, s, size) <= width
  for (const para of text.split('\n')) {
    const words: string[] = []
    for (const wd of para.split(/ +/)) {
      if (wd === '') continue
      // Keep a number with its unit ("38 mm", "25.0 mm,"): a size split over two lines misreads.
      const prev = words[words.length - 1]
      if (prev !== undefined && /\d$/.test(prev) && /^(mm|cm|deg|°)[,.;:)]?$/.test(wd)) words[words.length - 1] = `${prev} ${wd}`
      else words.push(wd)
    }
    let line = ''
    for (let word of words) {
      const candidate = line ? `${line} ${word}` : word
      if (fits(candidate)) {
        line = candidate
        continue
      }
      if (fits(word)) {
        // A short stub such as "UDI" is not left alone on a line when the long code that follows
        // can break at one of its own boundaries ("(" of a GS1 AI, "/" of HIBC data).
        if (line && pdfTextWidth(font, line, size) < width * 0.3) {
          let k = -1
          for (let j = word.length - 1; j > 0; j--) {
            if ((word[j] === '(' || word[j - 1] === '/') && fits(`${line} ${word.slice(0, j)}`)) {
              k = j
              break
            }
          }
          if (k > 0) {
            out.push(`${line} ${word.slice(0, k)}`)
            line = word.slice(k)
            continue
          }
        }
        out.push(line)
        line = word
        continue
      }
      // A word longer than a whole line: split it, starting on the current line.
      let prefix = line ? `${line} ` : ''
      while (!fits(prefix + word)) {
        let cut = word.length - 1
        while (cut > 0 && !fits(prefix + word.slice(0, cut))) cut--
        if (cut < 3 && prefix) {
          out.push(line)
          prefix = ''
          continue
        }
        cut = Math.max(cut, 1)
        // Prefer a natural break inside the part that fits.
        const head = word.slice(0, cut)
        const soft = Math.max(head.lastIndexOf('('), head.lastIndexOf('/') + 1, head.lastIndexOf('-') + 1, head.lastIndexOf('.') + 1)
        if (soft >= cut / 3) cut = soft
        out.push(prefix + word.slice(0, cut))
        prefix = ''
        word = word.slice(cut)
      }
      line = prefix + word
    }
    out.push(line)
  }
  return out
}

/** The module matrix of a DataMatrix symbol, or null when the data does not encode (fails lint). */
export function udiMatrix(sym: RecordUdiSymbol): { modules: number[][]; cols: number; rows: number } | null {
  try {
    const raw = bwipjs.raw({ bcid: sym.bcid, text: sym.text }) as { pixs: number[]; pixx: number; pixy: number }[]
    const m = raw[0]
    if (!m || !m.pixs || !m.pixx) return null
    const rows: number[][] = []
    for (let y = 0; y < m.pixy; y++) rows.push(m.pixs.slice(y * m.pixx, (y + 1) * m.pixx))
    return { modules: rows, cols: m.pixx, rows: m.pixy }
  } catch {
    return null
  }
}

/**
 * Draw a UDI DataMatrix with its top-left corner at (x, top) in PDF user space (top = the upper
 * edge's y), no larger than `maxSize` and with modules no larger than `maxModule`. Drawn as vector
 * squares in one path, so it scans from paper at any printer resolution. Returns the side used
 * (the symbol's lower-left corner is then at (x, top − side)), or null when it cannot be encoded.
 */
export function drawUdiDataMatrix(page: PDFPage, sym: RecordUdiSymbol, x: number, top: number, maxSize: number, maxModule = 1.8): number | null {
  const m = udiMatrix(sym)
  if (!m) return null
  const module = Math.min(maxModule, maxSize / Math.max(m.cols, m.rows))
  let path = ''
  for (let r = 0; r < m.rows; r++) {
    const row = m.modules[r]!
    for (let c = 0; c < m.cols; ) {
      if (!row[c]) {
        c++
        continue
      }
      let e = c
      while (e < m.cols && row[e]) e++
      path += `M${c} ${r}H${e}V${r + 1}H${c}Z`
      c = e
    }
  }
  const size = module * Math.max(m.cols, m.rows)
  // drawSvgPath puts the path's origin at the top-left, y growing downwards.
  page.drawSvgPath(path, { x, y: top, scale: module, color: rgb(0, 0, 0), borderWidth: 0 })
  return size
}

// ---------------------------------------------------------------------------------------------
// Layout
// ---------------------------------------------------------------------------------------------

type Weight = 'regular' | 'semibold' | 'bold'

interface Span {
  text: string
  weight?: Weight
  size?: number
  color?: RGB
  strike?: boolean
  /** draw a small caution/refused triangle before the text */
  icon?: RGB
  /** extra space above this paragraph, pt */
  gap?: number
}

interface Column { title: string; width: number }

interface Row {
  cells: Span[][]
  minHeight?: number
  /** draw extra things into the row once its position is known (top-down y of the row's top) */
  after?: (page: PDFPage, pageNo: number, top: number, height: number, xs: number[]) => void
  /** a thin rule above the row (between entries) */
  rule?: boolean
}

interface Extent { left: number; right: number; top: number; bottom: number }

const PAD = 3 // cell padding, pt
const LEAD = 1.28 // line height / font size

class Writer {
  readonly pages: PDFPage[] = []
  readonly extents: Extent[] = []
  readonly symbols: RecordPdfLayout['symbols'] = []
  readonly missing = new Set<string>()
  page!: PDFPage
  y = 0
  readonly left = PRINT_BOX.left
  readonly right = PRINT_BOX.right
  readonly width = PRINT_BOX.right - PRINT_BOX.left

  constructor(
    readonly doc: PDFDocument,
    readonly fonts: InterFonts,
    readonly r: CaseRecord,
    readonly facilityName: string,
    readonly missingChars: string[],
    readonly draft: boolean,
  ) {
    this.newPage(true)
  }

  // ----- primitives (top-down coordinates) -----

  private track(l: number, t: number, rgt: number, b: number) {
    const e = this.extents[this.pages.indexOf(this.page)]!
    e.left = Math.min(e.left, l)
    e.right = Math.max(e.right, rgt)
    e.top = Math.min(e.top, t)
    e.bottom = Math.max(e.bottom, b)
  }

  font(w: Weight = 'regular'): PDFFont {
    return this.fonts[w]
  }

  /** Replace characters the font lacks, and remember them for a notice on the record. */
  clean(text: string): string {
    if (!this.missingChars.length) return text
    let out = ''
    for (const ch of text) {
      if (this.missingChars.includes(ch)) {
        this.missing.add(ch)
        out += '?'
      } else out += ch
    }
    return out
  }

  text(s: string, x: number, top: number, o: { weight?: Weight; size?: number; color?: RGB; strike?: boolean } = {}) {
    const size = o.size ?? 9
    const font = this.font(o.weight)
    const str = this.clean(s)
    const baseline = top + size
    this.page.drawText(str, { x, y: A4[1] - baseline, size, font, color: o.color ?? INK })
    const wdt = pdfTextWidth(font, str, size)
    if (o.strike) {
      const sy = A4[1] - (baseline - size * 0.32)
      this.page.drawLine({ start: { x, y: sy }, end: { x: x + wdt, y: sy }, thickness: Math.max(0.6, size / 12), color: o.color ?? INK })
    }
    this.track(x, top, x + wdt, top + size * LEAD)
    return wdt
  }

  rule(y: number, o: { color?: RGB; thickness?: number; x1?: number; x2?: number } = {}) {
    const x1 = o.x1 ?? this.left
    const x2 = o.x2 ?? this.right
    const th = o.thickness ?? 0.5
    this.page.drawLine({ start: { x: x1, y: A4[1] - y }, end: { x: x2, y: A4[1] - y }, thickness: th, color: o.color ?? LINE })
    this.track(x1, y - th / 2, x2, y + th / 2)
  }

  box(x: number, top: number, w: number, h: number, o: { border?: RGB; fill?: RGB; borderWidth?: number }) {
    this.page.drawRectangle({
      x, y: A4[1] - top - h, width: w, height: h,
      ...(o.fill ? { color: o.fill } : {}),
      ...(o.border ? { borderColor: o.border, borderWidth: o.borderWidth ?? 0.75 } : { borderWidth: 0 }),
    })
    this.track(x, top, x + w, top + h)
  }

  /** A small warning triangle whose top-left is at (x, top), for `size`-pt text. */
  triangle(x: number, top: number, size: number, color: RGB) {
    const s = size * 0.82
    const t = top + size * 0.18
    const path = `M${s / 2} 0L${s} ${s}L0 ${s}Z`
    this.page.drawSvgPath(path, { x, y: A4[1] - t, color, borderWidth: 0 })
    // the exclamation mark, in white
    const bar = `M${s / 2 - s * 0.06} ${s * 0.34}H${s / 2 + s * 0.06}V${s * 0.7}H${s / 2 - s * 0.06}Z M${s / 2 - s * 0.06} ${s * 0.78}H${s / 2 + s * 0.06}V${s * 0.9}H${s / 2 - s * 0.06}Z`
    this.page.drawSvgPath(bar, { x, y: A4[1] - t, color: rgb(1, 1, 1), borderWidth: 0 })
    this.track(x, t, x + s, t + s)
    return s + size * 0.3
  }

  // ----- pages -----

  newPage(first = false) {
    this.page = this.doc.addPage(A4)
    this.pages.push(this.page)
    this.extents.push({ left: Infinity, right: -Infinity, top: Infinity, bottom: -Infinity })
    this.y = first ? CONTENT_TOP_FIRST : CONTENT_TOP
    if (!first) this.runningHeader()
  }

  /** Every later page names the patient, so a loose page can be filed back. */
  runningHeader() {
    const p = this.r.patient
    const top = PRINT_BOX.top
    // No-break spaces keep each label with its value when a long name wraps.
    const who = pdfWrapText(this.clean(`${p.name}  ·  MRN\u00a0${p.mrn}  ·  Born\u00a0${p.birthDate}`), this.font('semibold'), 8.5, this.width)
    who.forEach((ln, i) => this.text(ln, this.left, top + i * 8.5 * LEAD, { weight: 'semibold', size: 8.5 }))
    // The draft mark also in plain text: text extraction and screen readers skip the diagonal watermark.
    const draft = this.draft ? '  ·  DRAFT — not signed' : ''
    const room = this.width - pdfTextWidth(this.font('semibold'), who[0] ?? '', 8.5) - 12
    const right = [
      `Implant record  ·  case ${this.r.caseId}  ·  ${this.r.date}${draft}`,
      `Case ${this.r.caseId}  ·  ${this.r.date}${draft}`,
      this.draft ? 'DRAFT — not signed' : `Case ${this.r.caseId}`,
    ].find((t) => pdfTextWidth(this.font(), t, 8) <= room)
    let ruleY = top + Math.max(14, who.length * 8.5 * LEAD + 3)
    if (right) {
      this.text(right, this.right - pdfTextWidth(this.font(), right, 8), top + 0.5, { size: 8, color: SLATE })
    } else if (this.draft) {
      // A very long name: the draft mark goes on its own line under it.
      const t = 'DRAFT — not signed'
      this.text(t, this.right - pdfTextWidth(this.font(), t, 8), top + who.length * 8.5 * LEAD, { size: 8, color: SLATE })
      ruleY = Math.max(ruleY, top + who.length * 8.5 * LEAD + 8 * LEAD + 3)
    }
    this.rule(ruleY, { color: LINE })
    this.y = Math.max(this.y, ruleY + 8)
  }

  /** Start a new page unless `h` more points fit. */
  ensure(h: number): boolean {
    if (this.y + h <= CONTENT_BOTTOM) return false
    this.newPage()
    return true
  }

  // ----- paragraphs and tables -----

  spanLines(sp: Span, width: number): { lines: string[]; size: number; font: PDFFont } {
    const size = sp.size ?? 8.5
    const font = this.font(sp.weight)
    const iconW = sp.icon ? size * 0.82 + size * 0.3 : 0
    return { lines: pdfWrapText(this.clean(sp.text), font, size, width - iconW), size, font }
  }

  cellHeight(spans: Span[], width: number): number {
    let h = 0
    for (const sp of spans) {
      const { lines, size } = this.spanLines(sp, width)
      h += (sp.gap ?? 0) + lines.length * size * LEAD
    }
    return h
  }

  drawCell(spans: Span[], x: number, top: number, width: number) {
    let y = top
    for (const sp of spans) {
      y += sp.gap ?? 0
      const { lines, size } = this.spanLines(sp, width)
      let first = true
      for (const ln of lines) {
        let lx = x
        if (sp.icon) {
          if (first) this.triangle(x, y, size, sp.icon)
          lx += size * 0.82 + size * 0.3
        }
        if (ln) this.text(ln, lx, y, { weight: sp.weight, size, color: sp.color, strike: sp.strike })
        y += size * LEAD
        first = false
      }
    }
  }

  paragraph(spans: Span[], x = this.left, width = this.width) {
    // Line by line, so long free text can run onto the next page.
    for (const sp of spans) {
      this.y += sp.gap ?? 0
      const { lines, size } = this.spanLines(sp, width)
      lines.forEach((ln, i) => {
        this.ensure(size * LEAD)
        if (sp.icon && i === 0) this.triangle(x, this.y, size, sp.icon)
        const lx = sp.icon ? x + size * 0.82 + size * 0.3 : x
        if (ln) this.text(ln, lx, this.y, { weight: sp.weight, size, color: sp.color, strike: sp.strike })
        this.y += size * LEAD
      })
    }
  }

  sectionTitle(title: string, continued = false) {
    this.text(continued ? `${title} (continued)` : title, this.left, this.y, { weight: 'bold', size: 11.5 })
    this.y += 11.5 * LEAD + 1
  }

  tableHeader(cols: Column[]) {
    let x = this.left
    const h = 7 * LEAD + 2 * PAD
    for (const c of cols) {
      this.text(c.title, x + PAD, this.y + PAD, { weight: 'semibold', size: 7, color: SLATE })
      x += c.width
    }
    this.y += h
    this.rule(this.y, { color: INK, thickness: 0.6 })
  }

  /** A table that breaks between rows and repeats its title and header on each new page. */
  table(title: string, cols: Column[], rows: Row[]) {
    const xs: number[] = []
    let acc = this.left
    for (const c of cols) {
      xs.push(acc)
      acc += c.width
    }
    const heights = rows.map((row) =>
      Math.max(row.minHeight ?? 0, ...row.cells.map((cell, i) => this.cellHeight(cell, cols[i]!.width - 2 * PAD) + 2 * PAD)))
    const headH = 11.5 * LEAD + 1 + 7 * LEAD + 2 * PAD
    // Keep the title with the header and the first row.
    this.ensure(headH + (heights[0] ?? 0) + 6)
    this.sectionTitle(title)
    this.tableHeader(cols)
    rows.forEach((row, i) => {
      const h = heights[i]!
      if (this.y + h > CONTENT_BOTTOM) {
        this.newPage()
        this.sectionTitle(title, true)
        this.tableHeader(cols)
      } else if (i > 0 && row.rule !== false) {
        this.rule(this.y, { color: LINE })
      }
      row.cells.forEach((cell, c) => this.drawCell(cell, xs[c]! + PAD, this.y + PAD, cols[c]!.width - 2 * PAD))
      row.after?.(this.page, this.pages.length, this.y, h, xs)
      this.y += h
    })
    this.rule(this.y, { color: INK, thickness: 0.6 })
    this.y += 14
  }

  // ----- words -----

  when(t: RecordTime | null): string {
    if (!t) return '—'
    return t.date === this.r.date ? t.time : `${t.date} ${t.time}`
  }

  ack(f: RecordFinding): Span {
    return f.acknowledged
      ? { text: `Acknowledged by ${f.acknowledged.by}, ${this.when(f.acknowledged.at)}`, size: 7.5, color: SLATE }
      : { text: 'Not acknowledged', size: 7.5, weight: 'semibold', color: REFUSED }
  }

  // ----- sections -----

  headerBand() {
    const r = this.r
    const top = this.y
    const title = `Implant record  ·  version ${r.version}  ·  ${this.draft ? 'DRAFT — not signed' : 'signed'}`
    const titleW = pdfTextWidth(this.font('semibold'), title, 9)
    this.text(title, this.right - titleW, top, { weight: 'semibold', size: 9, color: SLATE })
    // A long facility name wraps beside the title instead of running into it.
    const fac = pdfWrapText(this.clean(this.facilityName), this.font('semibold'), 9, this.width - titleW - 16)
    fac.forEach((ln, i) => this.text(ln, this.left, top + i * 9 * LEAD, { weight: 'semibold', size: 9, color: SLATE }))
    this.y += fac.length * 9 * LEAD + 4
    // The patient's name is the largest thing on the page: it is what a nurse checks first.
    const nameLines = pdfWrapText(this.clean(r.patient.name), this.font('bold'), 18, this.width)
    for (const ln of nameLines) {
      this.text(ln, this.left, this.y, { weight: 'bold', size: 18 })
      this.y += 18 * 1.2
    }
    this.y += 2
    let x = this.left
    for (const [label, value] of [['MRN', r.patient.mrn], ['Born', r.patient.birthDate], ['Sex', r.patient.sexLabel]] as const) {
      x += this.text(`${label} `, x, this.y, { size: 10, color: SLATE })
      x += this.text(value, x, this.y, { weight: 'semibold', size: 10 }) + 16
    }
    this.y += 10 * LEAD + 6
    this.rule(this.y, { color: INK, thickness: 0.8 })
    this.y += 6

    const grid = (cells: [string, string, Weight?][], widths: number[]) => {
      let gx = this.left
      let tallest = 0
      cells.forEach(([label, value, weight], i) => {
        const wd = widths[i]!
        this.text(label, gx, this.y, { weight: 'semibold', size: 7, color: SLATE })
        const lines = pdfWrapText(this.clean(value), this.font(weight ?? 'semibold'), 10, wd - 8)
        lines.forEach((ln, j) => this.text(ln, gx, this.y + 7 * LEAD + j * 10 * LEAD, { weight: weight ?? 'semibold', size: 10 }))
        tallest = Math.max(tallest, 7 * LEAD + lines.length * 10 * LEAD)
        gx += wd
      })
      this.y += tallest + 6
    }
    const t = r.times
    const side = r.side === 'left' ? 'Left' : 'Right'
    grid(
      [['PROCEDURE', r.procedure.label], ['SIDE', side, 'bold'], ['DATE', r.date], ['THEATRE', r.theatre], ['CASE', String(r.caseId)]],
      [196, 72, 84, 92, this.width - 444],
    )
    grid(
      [
        ['SURGEON', r.team.surgeon.name],
        ['CIRCULATOR', r.team.circulator?.name ?? '—'],
        ['SCRUB', r.team.scrub?.name ?? '—'],
      ],
      [168, 168, this.width - 336],
    )
    const times = `Scheduled ${this.when(t.scheduled)}   ·   Opened ${this.when(t.opened)}   ·   Closed ${this.when(t.closed)}   (${r.facility.timeZone})`
    this.text('TIMES', this.left, this.y, { weight: 'semibold', size: 7, color: SLATE })
    this.text(times, this.left, this.y + 7 * LEAD, { size: 9 })
    this.y += 7 * LEAD + 9 * LEAD + 6
    this.rule(this.y, { color: INK, thickness: 0.8 })
    this.y += 12
    if (this.missingChars.length) {
      // Say so on the record rather than print an empty box for a letter of someone's name.
      this.paragraph([{
        text: `Some characters cannot be printed with this font and are shown as "?" (${this.missingChars.length}). The electronic record keeps the exact text.`,
        size: 8.5, weight: 'semibold', color: REFUSED, icon: REFUSED,
      }])
      this.y += 8
    }
  }

  addendumNotice() {
    const r = this.r
    const spans: Span[] = []
    if (r.version > 1) {
      spans.push({ text: `Addendum: version ${r.version} replaces version ${r.version - 1}.`, weight: 'semibold', size: 9 })
      spans.push({ text: `Reason: ${r.addendumReason ?? '—'}`, size: 9 })
      spans.push({ text: `SHA-256 of version ${r.version - 1}: ${r.previousVersionHash}`, size: 7.5, color: SLATE })
    }
    if (spans.length) {
      this.paragraph(spans)
      this.y += 10
    }
  }

  readings() {
    const r = this.r
    const cols: Column[] = [
      { title: 'READING', width: 150 }, { title: 'VALUE', width: 72 }, { title: 'ENTERED BY', width: 122 },
      { title: 'WHEN', width: 50 }, { title: 'CORRECTION', width: this.width - 394 },
    ]
    if (!r.readings.length) {
      this.ensure(40)
      this.sectionTitle('Readings')
      this.paragraph([{ text: 'No readings were entered.', size: 9, color: SLATE }])
      this.y += 12
      return
    }
    const rows: Row[] = []
    for (const rd of r.readings) {
      const label = rd.kind === 'distal_depth' && rd.slot > 0 ? `${rd.label} (hole ${rd.slot})` : rd.label
      const corrected = rd.corrections.length > 0
      rows.push({
        cells: [
          [{ text: label, weight: 'semibold' }],
          [{ text: rd.current.display, weight: 'bold', size: 9.5 }],
          [{ text: rd.current.enteredBy }],
          [{ text: this.when(rd.current.enteredAt) }],
          [{ text: corrected ? 'corrected value' : '', size: 7.5, weight: 'semibold' }],
        ],
      })
      for (const c of rd.corrections) {
        rows.push({
          rule: false,
          cells: [
            [{ text: 'earlier value', size: 7.5, color: SLATE }],
            [{ text: c.display, size: 8.5, color: SLATE, strike: true }],
            [{ text: c.enteredBy, size: 7.5, color: SLATE }],
            [{ text: this.when(c.enteredAt), size: 7.5, color: SLATE }],
            [{ text: c.correctedBy ? `corrected by ${c.correctedBy}, ${this.when(c.correctedAt)}` : 'corrected', size: 7.5, color: SLATE }],
          ],
        })
      }
    }
    this.table('Readings', cols, rows)
  }

  sizing() {
    const r = this.r
    const rp = r.sizing.ruleProfile
    // The standing caution sits where sizes are decided, large enough to be read (DESIGN.md, Tone).
    const capSize = 10
    const capLines = pdfWrapText(r.caution, this.font('semibold'), capSize, this.width - 28)
    const capH = capLines.length * capSize * LEAD + 12
    const profile = rp
      ? `Rule profile version ${rp.version}: nail ${fmt(rp.nailClearanceMm)} mm below the last reamer · distal screws rounded ${rp.distalScrewRounding} · tip-apex distance limit ${fmt(rp.tadLimitMm)} mm.`
      : 'No rule profile: sizes were chosen without proposals.'
    this.ensure(11.5 * LEAD + capH + 40)
    this.sectionTitle('Sizes and reasons')
    this.box(this.left, this.y, this.width, capH, { border: INK, borderWidth: 0.9 })
    this.triangle(this.left + 6, this.y + 6, capSize, CAUTION)
    capLines.forEach((ln, i) => this.text(ln, this.left + 22, this.y + 6 + i * capSize * LEAD, { weight: 'semibold', size: capSize }))
    this.y += capH + 6
    this.paragraph([{ text: profile, size: 8.5, color: SLATE }])
    this.y += 6

    const cols: Column[] = [
      { title: 'COMPONENT', width: 66 }, { title: 'PROPOSED', width: 108 }, { title: 'CHOSEN', width: 112 },
      { title: 'WHY', width: this.width - 66 - 108 - 112 - 72 }, { title: 'DECIDED', width: 72 },
    ]
    const rows: Row[] = r.sizing.decisions.map((d) => {
      const why: Span[] = []
      if (d.matchesProposal === false) {
        why.push({ text: `Reason for the change: ${d.reason ?? 'none given'}`, weight: 'semibold', color: d.reason ? INK : REFUSED })
      }
      for (const reason of d.reasons) why.push({ text: `• ${reason}`, size: 7.5, gap: why.length ? 1.5 : 0 })
      for (const wn of d.warnings) {
        why.push({ text: wn.message, size: 7.5, weight: 'semibold', color: CAUTION, icon: CAUTION, gap: 2 })
        why.push(this.ack(wn))
      }
      if (d.component === 'nail') {
        why.push(d.guideAcknowledged
          ? { text: 'Aiming guide checked against the nail (angle, side, length).', size: 7.5, gap: 2 }
          : { text: 'Aiming guide not confirmed against the nail.', size: 7.5, weight: 'semibold', color: CAUTION, gap: 2 })
      }
      if (!why.length) why.push({ text: '—', color: SLATE })
      return {
        cells: [
          [{ text: d.label, weight: 'semibold' }],
          d.proposed ? [{ text: d.proposed.description }] : [{ text: 'Nothing proposed', color: SLATE }],
          [
            { text: d.chosen.description, weight: 'semibold' },
            ...(d.matchesProposal === true ? [{ text: 'as proposed', size: 7.5, color: SLATE } as Span] : []),
            ...(d.matchesProposal === false ? [{ text: 'differs from the proposal', size: 7.5, weight: 'semibold' } as Span] : []),
          ],
          why,
          [{ text: d.decidedBy }, { text: this.when(d.decidedAt), size: 7.5, color: SLATE }],
        ],
      }
    })
    if (rows.length) this.table('Sizing decisions', cols, rows)
    else {
      this.paragraph([{ text: 'No sizing decisions were recorded.', size: 9, color: SLATE }])
      this.y += 10
    }

    // Tip-apex distance: Baumgaertner MR et al., J Bone Joint Surg Am 1995;77(7):1058–64.
    const t = r.tipApex
    this.ensure(11.5 * LEAD + 30)
    this.sectionTitle('Tip-apex distance')
    if (!t) this.paragraph([{ text: 'Not measured.', size: 9, color: SLATE }])
    else if (t.overLimit) {
      this.paragraph([{ text: `${fmt(t.tadMm)} mm — over the ${fmt(t.limitMm)} mm limit.`, size: 10, weight: 'bold', color: REFUSED, icon: REFUSED }])
    } else {
      this.paragraph([{ text: `${fmt(t.tadMm)} mm — within the ${fmt(t.limitMm)} mm limit.`, size: 10, weight: 'semibold' }])
    }
    this.y += 14
  }

  itemRows(items: RecordItem[], withSymbol: boolean, startNo = 1): Row[] {
    return items.map((it, i) => {
      const device: Span[] = [{ text: it.matched ? it.description : 'Not matched to the catalog', weight: 'semibold', color: it.matched ? INK : REFUSED }]
      if (it.maker) device.push({ text: it.maker.name, size: 7, color: SLATE })
      if (it.disposition === 'explanted') device.push({ text: 'Explanted (removed)', size: 7.5, weight: 'bold', gap: 1 })
      else if (it.disposition !== 'implanted' && it.disposition !== 'wasted') {
        device.push({ text: 'Disposition not set', size: 7.5, weight: 'bold', color: REFUSED, gap: 1 })
      }
      if (it.hri) device.push({ text: `UDI ${it.hri}`, size: 6.5, color: SLATE, gap: 1.5 })
      for (const ck of it.checks) {
        device.push({ text: ck.message, size: 7, weight: 'semibold', color: CAUTION, icon: CAUTION, gap: 2 })
        device.push({ ...this.ack(ck), size: 7 })
      }
      const recorded: Span[] = [
        { text: this.when(it.recordedAt) },
        { text: it.recordedBy, size: 7.5 },
        { text: SOURCE_WORDS[it.source] ?? it.source, size: 7, color: SLATE },
      ]
      const idCell: Span[] = [{ text: it.di ?? '—' }, ...(it.issuer ? [{ text: it.issuer, size: 7, color: SLATE } as Span] : [])]
      if (!withSymbol) {
        const reason: Span[] = [{ text: it.wasteReasonLabel ?? 'No reason given', weight: 'semibold', color: it.wasteReasonLabel ? INK : REFUSED }]
        if (it.wasteNote) reason.push({ text: it.wasteNote, size: 7.5 })
        return { cells: [device, idCell, [{ text: it.lot ?? '—' }], [{ text: it.serial ?? '—' }], reason, recorded] }
      }
      const sym = it.udiSymbol
      return {
        minHeight: sym ? SYMBOL_CELL + 2 * PAD : 0,
        cells: [
          [{ text: String(startNo + i), color: SLATE }],
          device, idCell,
          [{ text: it.lot ?? '—' }], [{ text: it.serial ?? '—' }], [{ text: it.expiry ?? '—' }],
          recorded,
          sym ? [] : [{ text: 'no UDI', size: 7, color: SLATE }],
        ],
        after: (page, pageNo, top, _h, xs) => {
          if (!sym) return
          const colX = xs[xs.length - 1]!
          const x = colX + PAD + 2
          const symTop = top + PAD + 2
          const size = drawUdiDataMatrix(page, sym, x, A4[1] - symTop, SYMBOL_SIZE)
          if (size === null) {
            this.drawCell([{ text: 'Symbol not printed: the UDI data does not encode.', size: 6.5, color: REFUSED }], colX + PAD, top + PAD, SYMBOL_COL - 2 * PAD)
            return
          }
          this.track(x, symTop, x + size, symTop + size)
          this.symbols.push({ itemId: it.id, page: pageNo, x, y: A4[1] - symTop - size, size, bcid: sym.bcid, text: sym.text })
        },
      }
    })
  }

  implants() {
    const r = this.r
    const list = [...r.implants, ...r.pending]
    const rest = this.width - (16 + 80 + 54 + 58 + 60 + 62 + SYMBOL_COL)
    const cols: Column[] = [
      { title: '#', width: 16 }, { title: 'DEVICE', width: rest }, { title: 'DI', width: 80 }, { title: 'LOT', width: 54 },
      { title: 'SERIAL', width: 58 }, { title: 'EXPIRY', width: 60 }, { title: 'RECORDED', width: 62 }, { title: 'UDI', width: SYMBOL_COL },
    ]
    if (!list.length) {
      this.ensure(40)
      this.sectionTitle('Implants')
      this.paragraph([{ text: 'No implant is recorded as implanted.', size: 9, weight: 'semibold', color: REFUSED }])
      this.y += 12
      return
    }
    this.table('Implants', cols, this.itemRows(list, true))
  }

  waste() {
    const r = this.r
    const cols: Column[] = [
      { title: 'DEVICE (OPENED, NOT IMPLANTED)', width: this.width - 80 - 56 - 58 - 104 - 62 }, { title: 'DI', width: 80 },
      { title: 'LOT', width: 56 }, { title: 'SERIAL', width: 58 }, { title: 'REASON', width: 104 }, { title: 'RECORDED', width: 62 },
    ]
    if (!r.waste.length) {
      this.ensure(40)
      this.sectionTitle('Waste')
      this.paragraph([{ text: 'Nothing was wasted.', size: 9, color: SLATE }])
      this.y += 12
      return
    }
    this.table('Waste', cols, this.itemRows(r.waste, false))
  }

  warnings() {
    const r = this.r
    const cols: Column[] = [
      { title: 'ABOUT', width: 132 }, { title: 'CAUTION', width: this.width - 132 - 150 }, { title: 'ACKNOWLEDGEMENT', width: 150 },
    ]
    if (!r.warnings.length) {
      this.ensure(40)
      this.sectionTitle('Cautions and acknowledgements')
      this.paragraph([{ text: 'No cautions were raised.', size: 9, color: SLATE }])
      this.y += 12
      return
    }
    const rows: Row[] = r.warnings.map((w) => ({
      cells: [
        [{ text: w.subject, weight: 'semibold' }],
        [
          { text: w.message, icon: w.acknowledged ? CAUTION : REFUSED },
          ...(w.source ? [{ text: `Source: ${w.source}`, size: 7, color: SLATE } as Span] : []),
        ],
        w.acknowledged
          ? [{ text: w.acknowledged.by }, { text: this.when(w.acknowledged.at), size: 7.5, color: SLATE }]
          : [{ text: 'Not acknowledged', weight: 'semibold', color: REFUSED }],
      ],
    }))
    this.table('Cautions and acknowledgements', cols, rows)
  }

  signature(sig: RecordSignature | null, hash: string) {
    const tz = this.r.facility.timeZone
    const inner = this.width - 20
    const spans: Span[] = sig
      ? [
          { text: `Signed by ${sig.signerName}`, weight: 'bold', size: 11 },
          { text: (() => { const t = recordTime(sig.signedAt, tz, 'signedAt'); return `${t.date} ${t.time} (${tz})` })(), size: 9, gap: 1 },
          { text: sig.attestation, size: 9, gap: 5 },
          { text: 'SHA-256 of this record', size: 7, weight: 'semibold', color: SLATE, gap: 6 },
          { text: sig.recordHash.toLowerCase(), size: 8.5, weight: 'semibold' },
        ]
      : [
          { text: 'Not signed', weight: 'bold', size: 11 },
          { text: 'This version is a draft. It becomes the record when the surgeon signs it.', size: 9, gap: 1 },
          { text: 'SHA-256 of this draft', size: 7, weight: 'semibold', color: SLATE, gap: 6 },
          { text: hash, size: 8.5, weight: 'semibold' },
        ]
    const h = this.cellHeight(spans, inner) + 20
    const fitsOnePage = h + 11.5 * LEAD + 2 <= CONTENT_BOTTOM - CONTENT_TOP
    this.ensure(fitsOnePage ? h + 11.5 * LEAD + 2 : 11.5 * LEAD + 60)
    this.sectionTitle('Signature')
    if (fitsOnePage) {
      this.box(this.left, this.y, this.width, h, { border: INK, borderWidth: 0.9 })
      this.drawCell(spans, this.left + 10, this.y + 10, inner)
      this.y += h + 10
    } else {
      // An attestation longer than a page: plain paragraphs that may break.
      this.paragraph(spans, this.left + 10, inner)
    }
  }

  /** Footers and watermark need the final page count, so they are drawn last. */
  finish(hash: string, draft: boolean) {
    const n = this.pages.length
    this.pages.forEach((page, i) => {
      this.page = page
      const top = PRINT_BOX.bottom - 8 * LEAD
      this.rule(top - 4, { color: LINE })
      const left = `Isthmus implant record  ·  case ${this.r.caseId}  ·  version ${this.r.version}  ·  SHA-256 ${hash.slice(0, 16)}…`
      this.text(left, this.left, top, { size: 7.5, color: SLATE })
      const right = `Page ${i + 1} of ${n}`
      this.text(right, this.right - pdfTextWidth(this.font('semibold'), right, 8), top - 0.5, { size: 8, weight: 'semibold' })
      if (draft) this.watermark(page)
    })
  }

  watermark(page: PDFPage) {
    const text = 'DRAFT — not signed'
    const size = 64
    const font = this.font('bold')
    const wdt = pdfTextWidth(font, text, size)
    const a = Math.atan2(A4[1], A4[0])
    const cx = A4[0] / 2
    const cy = A4[1] / 2
    const cap = size * 0.36
    // Centre the rotated line on the page centre.
    const x = cx - (wdt / 2) * Math.cos(a) + cap * Math.sin(a)
    const y = cy - (wdt / 2) * Math.sin(a) - cap * Math.cos(a)
    page.drawText(text, { x, y, size, font, color: SLATE, opacity: 0.16, rotate: degrees((a * 180) / Math.PI) })
  }
}

const SYMBOL_COL = 54
const SYMBOL_SIZE = 40 // pt, about 14 mm
const SYMBOL_CELL = SYMBOL_SIZE + 4

const SOURCE_WORDS: Record<string, string> = { camera: 'camera scan', wedge: 'scanner', photo: 'label photo', manual: 'typed' }

/** One decimal, as gauges and the rule profile are read: 25 → "25.0", 23.04 → "23.0". */
function fmt(n: number): string {
  return n.toFixed(1)
}
