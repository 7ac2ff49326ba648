/**
 * Inter for PDFs: the TTF files of @expo-google-fonts/inter, subset per document to the glyphs it uses.
 *
 * Why TTF: pdf-lib + fontkit embed woff/woff2 wrongly or crash (STACK.md, "PDF fonts").
 * Two corrections to @pdf-lib/fontkit make the subset both right and fast (see below); with them a
 * record takes a tenth of the time and a fifteenth of the bytes of embedding the whole fonts.
 */
import { readFileSync } from 'node:fs'
import { createRequire } from 'node:module'
import { join } from 'node:path'
import fontkit from '@pdf-lib/fontkit'
import type { PDFDocument, PDFFont } from 'pdf-lib'

export type InterWeight = 'regular' | 'semibold' | 'bold'

const FILES: Record<InterWeight, string> = {
  regular: '@expo-google-fonts/inter/400Regular/Inter_400Regular.ttf',
  semibold: '@expo-google-fonts/inter/600SemiBold/Inter_600SemiBold.ttf',
  bold: '@expo-google-fonts/inter/700Bold/Inter_700Bold.ttf',
}

const bytesCache = new Map<InterWeight, Uint8Array>()

/**
 * Where the TTF is on disk. Resolved from this module first, then from the working directory,
 * because a bundled server may live somewhere the package is not next to.
 */
export function interFontPath(weight: InterWeight): string {
  const bases = [import.meta.url, join(process.cwd(), 'package.json')]
  let last: unknown
  for (const base of bases) {
    try {
      return createRequire(base).resolve(FILES[weight])
    } catch (e) {
      last = e
    }
  }
  throw new Error(`Inter ${weight} (TTF) not found: install @expo-google-fonts/inter (${String(last)})`)
}

export function interFontBytes(weight: InterWeight): Uint8Array {
  let b = bytesCache.get(weight)
  if (!b) {
    b = new Uint8Array(readFileSync(interFontPath(weight)))
    bytesCache.set(weight, b)
  }
  return b
}

export interface InterFonts { regular: PDFFont; semibold: PDFFont; bold: PDFFont }

interface FontkitGlyph { id: number; advanceWidth: number }
interface FontkitFont {
  layout: (text: string, features?: unknown) => { glyphs: FontkitGlyph[] }
  glyphsForString: (text: string) => FontkitGlyph[]
}
interface GlyphRecord extends Uint8Array { constructor: new (n: number) => Uint8Array }
interface TtfSubset { glyf: GlyphRecord[]; offset: number; _addGlyph: (gid: number) => number }

/**
 * Glyphs straight from the character map, without OpenType shaping. pdf-lib places glyphs by their
 * advance widths only (it drops the positions shaping computes), so shaping bought nothing but
 * Inter's contextual forms, and it cost three quarters of a record's CPU (GSUB/GPOS lookups for
 * every string drawn or measured). NFC first, so a decomposed "é" prints as one glyph.
 */
const plain = new WeakSet<object>()
function plainLayout(font: PDFFont): void {
  const fk = (font as unknown as { embedder: { font: FontkitFont } }).embedder.font
  if (plain.has(fk)) return
  fk.layout = (text: string) => ({ glyphs: fk.glyphsForString(text.normalize('NFC')) })
  plain.add(fk)
}

/**
 * fontkit's TrueType subset writes the glyph records back to back and then picks the short `loca`
 * format (offsets stored halved) whenever the table is small; Inter has 518 glyph records of odd
 * length, so every glyph after one of them pointed half a byte off and vanished from the page
 * (pdftotext still read it). Padding each record to 4 bytes, as the TrueType spec recommends
 * ("glyf" table: records should be long-aligned), keeps every offset exact in either format.
 */
const padded = new WeakSet<object>()
function padGlyphRecords(font: PDFFont): void {
  const subset = (font as unknown as { embedder: { subset?: TtfSubset } }).embedder.subset
  if (!subset) return
  const proto = Object.getPrototypeOf(subset) as TtfSubset
  if (padded.has(proto)) return
  const addGlyph = proto._addGlyph
  proto._addGlyph = function (this: TtfSubset, gid: number) {
    const id = addGlyph.call(this, gid)
    const last = this.glyf.length - 1
    const rec = this.glyf[last]!
    const extra = (4 - (rec.length % 4)) % 4
    if (extra) {
      // the same Buffer class fontkit's encoder expects, zero-filled
      const p = new rec.constructor(rec.length + extra)
      p.fill(0)
      p.set(rec)
      this.glyf[last] = p as GlyphRecord
      this.offset += extra
    }
    return id
  }
  padded.add(proto)
}

/**
 * pdf-lib parses the font bytes again for every document (fontkit.create), and fontkit caches each
 * decoded glyph on the font object. One parsed font per weight for the whole process keeps those
 * glyphs decoded; each document still gets its own subset (createSubset) and its own embedding.
 */
const parsed = new WeakMap<Uint8Array, ReturnType<typeof fontkit.create>>()
const sharedFontkit: typeof fontkit = {
  ...fontkit,
  create(bytes: Uint8Array, postscriptName?: string) {
    let font = parsed.get(bytes)
    if (!font) {
      font = fontkit.create(bytes, postscriptName)
      parsed.set(bytes, font)
    }
    return font
  },
}

/** Embed the three weights into `doc`, each subset to what the document draws. Fixed font names keep the output reproducible. */
export async function embedInter(doc: PDFDocument): Promise<InterFonts> {
  doc.registerFontkit(sharedFontkit)
  const embed = async (w: InterWeight, name: string) => {
    const font = await doc.embedFont(interFontBytes(w), { subset: true, customName: name })
    plainLayout(font)
    padGlyphRecords(font)
    return font
  }
  const [regular, semibold, bold] = await Promise.all([
    // ISO 32000-1 §9.6.4: a subset's name starts with a six-letter tag; fixed tags keep the bytes reproducible
    embed('regular', 'ISTHRG+Inter-Regular'),
    embed('semibold', 'ISTHSB+Inter-SemiBold'),
    embed('bold', 'ISTHBD+Inter-Bold'),
  ])
  return { regular, semibold, bold }
}

/** Characters of `text` the font has no glyph for (they would print as empty boxes). */
const charSets = new WeakMap<PDFFont, Set<number>>()

export function missingGlyphs(font: PDFFont, text: string): string[] {
  let have = charSets.get(font)
  if (!have) {
    have = new Set(font.getCharacterSet())
    charSets.set(font, have)
  }
  const out = new Set<string>()
  for (const ch of text) {
    const cp = ch.codePointAt(0)!
    if (cp < 0x20) continue
    if (!have.has(cp)) out.add(ch)
  }
  return [...out]
}
