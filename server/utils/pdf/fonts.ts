/**
 * Inter for PDFs: the TTF files of @expo-google-fonts/inter, embedded whole.
 *
 * Why TTF and `subset: false`: pdf-lib + fontkit embed woff/woff2 wrongly or crash, and subsetting
 * Inter drops glyphs that pdftotext still "reads" but the page does not show (STACK.md, "PDF fonts").
 * The bytes are read once per process; each PDF document still embeds its own copy.
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

/**
 * Embed the three weights into `doc`. Fixed font names keep the output reproducible.
 * No OpenType features (e.g. tnum): pdf-lib then writes glyph widths that do not match the
 * substituted glyphs (wide gaps on the page) and loses their text mapping, as seen in pdftoppm.
 */
export async function embedInter(doc: PDFDocument): Promise<InterFonts> {
  doc.registerFontkit(fontkit)
  const embed = (w: InterWeight, name: string) =>
    doc.embedFont(interFontBytes(w), { subset: false, customName: name })
  const [regular, semibold, bold] = await Promise.all([
    embed('regular', 'Inter-Regular'),
    embed('semibold', 'Inter-SemiBold'),
    embed('bold', 'Inter-Bold'),
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
