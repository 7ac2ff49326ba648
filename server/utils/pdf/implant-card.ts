/**
 * The patient implant card: wallet size (ISO/IEC 7810 ID-1, 85.6 × 54 mm), one device per card,
 * large type (DESIGN.md, "The PDF record").
 *
 * Contents follow EU MDR Art. 18(1)(a) (device name, serial, lot, UDI, manufacturer's name,
 * address and website) and what the implanting institution adds under Art. 18(2) and MDCG 2019-8:
 * the patient's identity, the date of implantation and the implanting institution.
 *
 * Reproducible like the record: the PDF dates come from the record, not the clock.
 */
import { PDFDocument, type PDFFont, type RGB } from 'pdf-lib'
import type { CaseRecord, RecordItem } from '../../../shared/utils/record'
import { embedInter } from './fonts'
import { INK, LINE, MM, SLATE, drawUdiDataMatrix, pdfWrapText } from './record-pdf'

/** ID-1: 85.6 × 54 mm (ISO/IEC 7810), in pt. */
export const CARD_SIZE: [number, number] = [85.6 * MM, 54 * MM]

/**
 * Kinds exempt from the implant card. EU MDR Art. 18(3) exempts "sutures, staples, dental fillings,
 * dental braces, tooth crowns, screws, wedges, plates, wires, pins, clips and connectors". In our
 * catalog a head element is a (lag) screw, and distal and set screws are screws; an end cap is a
 * threaded plug closing the nail, a screw as well. A nail is not on the list.
 */
export const CARD_EXEMPT_KINDS: ReadonlySet<string> = new Set(['head_element', 'distal_screw', 'set_screw', 'end_cap'])

/** Words in a kind that put it on the Art. 18(3) list, for kinds added later. */
const EXEMPT_WORDS = /(^|_)(screw|screws|plate|plates|wire|wires|pin|pins|wedge|wedges|clip|clips|connector|connectors|suture|sutures|staple|staples)(_|$)/

/**
 * Does this item get a patient implant card? Only an implanted, catalog-matched device that the
 * catalog marks for a card and that is not exempt under EU MDR Art. 18(3).
 */
export function cardEligible(item: Pick<RecordItem, 'kind' | 'implantCard' | 'disposition'> & { matched?: boolean; description?: string }): boolean {
  if (item.disposition !== 'implanted') return false
  if (item.implantCard !== true) return false
  if (item.matched === false || item.kind === 'unmatched' || (item.description !== undefined && item.description.trim() === '')) return false
  if (CARD_EXEMPT_KINDS.has(item.kind) || EXEMPT_WORDS.test(item.kind)) return false
  return true
}

export interface ImplantCardOptions {
  /** the implanting institution as printed, e.g. "Ferncliff General Hospital (demo), 10 Harbour Road, Demo Town" */
  institution: string
  /** receives where the UDI symbol was drawn (lower-left corner, PDF user space, pt), for tests */
  debug?: (layout: { symbol: { x: number; y: number; size: number } | null }) => void
}

export async function renderImplantCard(record: CaseRecord, itemId: number, opts: ImplantCardOptions): Promise<Uint8Array> {
  const item = record.implants.find((i) => i.id === itemId)
  if (!item) throw new Error(`Item ${itemId} is not an implant of case ${record.caseId}.`)
  if (!cardEligible(item)) {
    throw new Error(`Item ${itemId} (${item.kindLabel.toLowerCase()}) gets no implant card: only implanted devices not exempt under EU MDR Art. 18(3).`)
  }

  const doc = await PDFDocument.create({ updateMetadata: false })
  const fonts = await embedInter(doc)
  const [W, H] = CARD_SIZE
  const page = doc.addPage(CARD_SIZE)
  const m = 3.2 * MM
  let y = m // top-down cursor

  const text = (s: string, x: number, top: number, font: PDFFont, size: number, color: RGB = INK) => {
    page.drawText(s, { x, y: H - top - size, size, font, color })
  }
  /**
   * Largest size (down to `min`) at which `s` fits in `maxLines` lines of `width` and, if given,
   * in `maxHeight`. At `min` it is cut to what fits rather than run off the card.
   */
  const fit = (s: string, font: PDFFont, width: number, max: number, min: number, maxLines: number, lead = 1.2, maxHeight = Infinity) => {
    for (let size = max; size >= min; size -= 0.25) {
      const lines = pdfWrapText(s, font, size, width)
      if (lines.length <= maxLines && lines.length * size * lead <= maxHeight) return { size, lines }
    }
    const keep = Math.max(1, Math.min(maxLines, Math.floor(maxHeight / (min * lead))))
    return { size: min, lines: pdfWrapText(s, font, min, width).slice(0, keep) }
  }
  const label = (s: string, x: number, top: number) => text(s.toUpperCase(), x, top, fonts.semibold, 5.5, SLATE)

  // Top band: what the card is, and the symbol at the right.
  const symSize = 15 * MM
  const symX = W - m - symSize
  const textW = symX - m - 2 * MM
  label('Patient implant card', m, y)
  y += 8

  const name = fit(item.description, fonts.bold, textW, 11, 8, 3)
  for (const ln of name.lines) {
    text(ln, m, y, fonts.bold, name.size)
    y += name.size * 1.18
  }
  y += 2
  const ids = [item.lot ? `Lot ${item.lot}` : null, item.serial ? `SN ${item.serial}` : null].filter(Boolean).join(' · ')
  if (ids) {
    const idFit = fit(ids, fonts.semibold, textW, 9, 6.5, 2)
    for (const ln of idFit.lines) {
      text(ln, m, y, fonts.semibold, idFit.size)
      y += idFit.size * 1.25
    }
  }
  if (item.hri) {
    y += 1
    const udi = fit(`UDI ${item.hri}`, fonts.regular, textW, 6.5, 5.5, 3)
    for (const ln of udi.lines) {
      text(ln, m, y, fonts.regular, udi.size)
      y += udi.size * 1.25
    }
  }
  const symTop = H - m - 1
  const drawn = item.udiSymbol ? drawUdiDataMatrix(page, item.udiSymbol, symX, symTop, symSize, 1.6) : null

  // Lower half: patient and implantation on the left, manufacturer on the right.
  const split = Math.max(y + 3, H * 0.5)
  page.drawLine({ start: { x: m, y: H - split }, end: { x: W - m, y: H - split }, thickness: 0.5, color: LINE })
  const colW = (W - 2 * m - 3 * MM) / 2
  const rightX = m + colW + 3 * MM
  const bottom = H - m

  let ly = split + 3
  label('Patient', m, ly)
  ly += 7
  const pn = fit(record.patient.name, fonts.bold, colW, 8.5, 6.5, 2)
  for (const ln of pn.lines) {
    text(ln, m, ly, fonts.bold, pn.size)
    ly += pn.size * 1.2
  }
  text(`MRN ${record.patient.mrn}`, m, ly, fonts.regular, 7)
  ly += 7 * 1.3 + 2
  label('Implanted', m, ly)
  ly += 7
  text(item.recordedAt.date, m, ly, fonts.semibold, 8)
  ly += 8 * 1.3
  const inst = fit(`at ${opts.institution}`, fonts.regular, colW, 6.5, 5, 4, 1.2, bottom - ly)
  for (const ln of inst.lines) {
    text(ln, m, ly, fonts.regular, inst.size)
    ly += inst.size * 1.2
  }

  let ry = split + 3
  label('Manufacturer', rightX, ry)
  ry += 7
  if (item.maker) {
    const mk = fit(item.maker.name, fonts.semibold, colW, 7.5, 6, 2)
    for (const ln of mk.lines) {
      text(ln, rightX, ry, fonts.semibold, mk.size)
      ry += mk.size * 1.2
    }
    const rest = [item.maker.address, item.maker.website].filter((s) => s && s.trim()).join('\n')
    const ad = fit(rest, fonts.regular, colW, 6.5, 5, 5, 1.2, bottom - ry)
    for (const ln of ad.lines) {
      text(ln, rightX, ry, fonts.regular, ad.size)
      ry += ad.size * 1.2
    }
  } else {
    text('Not recorded', rightX, ry, fonts.regular, 7, SLATE)
  }

  opts.debug?.({ symbol: drawn === null ? null : { x: symX, y: symTop - drawn, size: drawn } })
  doc.setTitle(`Patient implant card, case ${record.caseId}, item ${item.id}`)
  doc.setCreator('Isthmus')
  doc.setProducer('Isthmus')
  doc.setLanguage('en')
  const when = new Date(item.recordedAt.iso)
  doc.setCreationDate(when)
  doc.setModificationDate(when)
  return doc.save({ useObjectStreams: true })
}
