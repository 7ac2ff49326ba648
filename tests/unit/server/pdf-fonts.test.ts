/**
 * The PDF fonts are subset per document and laid out without OpenType shaping (server/utils/pdf/fonts.ts).
 * Both are corrections to what the libraries do by themselves, so check them against an outside renderer:
 * poppler (pdftoppm, pdftotext) must draw every character of our subset with the same ink as the whole,
 * untouched font, and read the same text back.
 */
import { execFileSync } from 'node:child_process'
import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import fontkit from '@pdf-lib/fontkit'
import { PDFDocument, rgb, type PDFFont } from 'pdf-lib'
import { afterAll, describe, expect, it } from 'vitest'
import { embedInter, interFontBytes, type InterWeight } from '../../../server/utils/pdf/fonts'

// What records print: ASCII, the marks of sizes (× ° ± ≤ ≥ µ), dashes and quotes, and names in Latin,
// Greek and Cyrillic letters, decomposed accents included (e + U+0301 prints as é after NFC).
const CHARS = [...'!"#$%&\'()*+,-./0123456789:;<=>?@ABCDEFGHIJKLMNOPQRSTUVWXYZ[\\]^_`abcdefghijklmnopqrstuvwxyz{|}~',
  ...'×°±≤≥µ—–·’“”…', ...'ÅÄÖÉÈÜßøæçñłŠžő', ...'ΩλβЖжЯя']
const COLS = 16
const CELL = 24 // pt
const dir = mkdtempSync(join(tmpdir(), 'isthmus-fonts-'))
afterAll(() => rmSync(dir, { recursive: true, force: true }))

async function grid(embed: (doc: PDFDocument) => Promise<PDFFont>, chars: string[]): Promise<Uint8Array> {
  const doc = await PDFDocument.create({ updateMetadata: false })
  const font = await embed(doc)
  const rows = Math.ceil(chars.length / COLS)
  const page = doc.addPage([COLS * CELL, rows * CELL])
  chars.forEach((ch, i) => {
    const x = (i % COLS) * CELL + 4
    const y = rows * CELL - (Math.floor(i / COLS) + 1) * CELL + 6
    page.drawText(ch, { x, y, size: 16, font, color: rgb(0, 0, 0) })
  })
  return doc.save()
}

/** Dark pixels per grid cell, from poppler's rendering of the page at 4 px per pt (grey PGM). */
function inkPerCell(pdf: Uint8Array, name: string, cells: number): number[] {
  const file = join(dir, `${name}.pdf`)
  writeFileSync(file, pdf)
  execFileSync('pdftoppm', ['-gray', '-r', '288', file, join(dir, name)])
  const pgm = readFileSync(join(dir, readdirSync(dir).find((f) => f.startsWith(`${name}-`) && f.endsWith('.pgm'))!))
  // "P5\n<w> <h>\n255\n" then one byte per pixel
  const header = pgm.subarray(0, 40).toString('latin1').match(/^P5\s+(\d+)\s+(\d+)\s+255\s/)!
  const [w, h] = [Number(header[1]), Number(header[2])]
  const px = pgm.subarray(header[0].length)
  const side = CELL * 4
  const ink = new Array<number>(cells).fill(0)
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      if (px[y * w + x]! < 128) {
        const cell = Math.floor(y / side) * COLS + Math.floor(x / side)
        if (cell < cells) ink[cell]! += 1
      }
    }
  }
  return ink
}

describe('Inter in our PDFs: subset, unshaped, and every glyph still on the page', () => {
  it.each(['regular', 'semibold', 'bold'] as InterWeight[])('%s: each character has the ink of the whole font', async (weight) => {
    const ours = await grid(async (doc) => (await embedInter(doc))[weight], CHARS)
    // the reference: the same TTF embedded whole through pdf-lib's own path (fontkit unpatched, shaping on)
    const whole = await grid(async (doc) => {
      doc.registerFontkit(fontkit)
      return doc.embedFont(interFontBytes(weight), { subset: false })
    }, CHARS)
    const a = inkPerCell(ours, `ours-${weight}`, CHARS.length)
    const b = inkPerCell(whole, `whole-${weight}`, CHARS.length)
    const off = CHARS.filter((_, i) => b[i]! === 0 || Math.abs(a[i]! - b[i]!) > 0.05 * b[i]!)
      .map((ch) => `${ch} (ours ${a[CHARS.indexOf(ch)]}, whole ${b[CHARS.indexOf(ch)]})`)
    expect(off, 'characters drawn differently').toEqual([])
    expect(ours.length).toBeLessThan(whole.length / 5) // a subset, not the whole font again
  })

  it('the text reads back as written, and a decomposed accent prints as its one letter', async () => {
    const doc = await PDFDocument.create({ updateMetadata: false })
    const { regular } = await embedInter(doc)
    const page = doc.addPage([400, 120])
    page.drawText('Ærøskøbing-Żółć · 11 mm × 380 mm, 130°', { x: 10, y: 80, size: 14, font: regular })
    page.drawText('Rene\u0301e Lefe\u0300vre', { x: 10, y: 40, size: 14, font: regular })
    const file = join(dir, 'text.pdf')
    writeFileSync(file, await doc.save())
    const text = execFileSync('pdftotext', [file, '-'], { encoding: 'utf8' })
    expect(text).toContain('Ærøskøbing-Żółć · 11 mm × 380 mm, 130°')
    expect(text).toContain('Renée Lefèvre')
    // and the composed letter has the width of "é", not of "e" plus a mark
    expect(regular.widthOfTextAtSize('Rene\u0301e', 14)).toBeCloseTo(regular.widthOfTextAtSize('Renée', 14), 6)
  })
})
