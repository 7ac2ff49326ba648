/**
 * Test helper: make real barcode images and read them back the way a scanner would.
 *
 * Why: a UDI parser tested only against hand-typed strings can agree with itself and still be
 * wrong about what a scanner sends. Here bwip-js (an independent encoder with its own GS1 lint)
 * draws the symbol, @zxing/library (an independent decoder) reads the PNG, and `scannerString`
 * turns zxing's text into the bytes a configured hardware scanner transmits.
 *
 * Reused by API and browser tests to make label images, so it stays general:
 *   - makeSymbolPng(bcid, text, opts?)  → PNG Buffer (white background, quiet zone)
 *   - decodePng(png, kind)              → exactly what zxing reports (GS as U+001D)
 *   - scannerString(decoded, kind, opts) → what a scanner in a given mode would send
 *   - scanLabel(bcid, text, opts?)      → the three steps in one call
 *   - kindOfBcid(bcid)                  → which reader a bwip-js symbol needs
 *
 * Behaviour of the libraries this relies on (standards.md Part B, checked on this machine):
 *   - bwip-js PNGs are transparent unless backgroundcolor is set; DataMatrix needs padding.
 *   - zxing's DataMatrix reader returns GS1 data with a leading U+001D (the FNC1 in first
 *     position), not `]d2`; GS1 QR comes back with no marker at all; Code 128 needs the
 *     ASSUME_GS1 hint, or the separators are silently dropped, and then starts with `]C1`.
 *   - bwip-js adds the HIBC leading `+` and the mod-43 check character itself.
 */
// The Node entry point explicitly: the package root has no type condition for bundler resolution.
import bwipjs from 'bwip-js/node'
import {
  BarcodeFormat,
  BinaryBitmap,
  DecodeHintType,
  HybridBinarizer,
  MultiFormatReader,
  RGBLuminanceSource,
} from '@zxing/library'
import { PNG } from 'pngjs'

export type SymbolKind = 'datamatrix' | 'code128' | 'qr' | 'code39'

/** Options passed through to bwip-js (scale, height, includetext, dontlint …). */
export type SymbolOptions = Record<string, unknown>

const GS = '\u001D'

/** Which zxing reader a bwip-js symbology needs. */
export function kindOfBcid(bcid: string): SymbolKind {
  if (/datamatrix/i.test(bcid)) return 'datamatrix'
  if (/qrcode/i.test(bcid)) return 'qr'
  if (/code39/i.test(bcid)) return 'code39'
  if (/128/.test(bcid)) return 'code128'
  throw new Error(`kindOfBcid: no reader known for bcid "${bcid}"`)
}

/**
 * Draw a symbol as a PNG. Defaults give zxing what it needs: a white (opaque) background and a
 * quiet zone. 1D symbols get a bar height; HRI text is off unless asked for, because text under
 * the bars is not read by zxing and only slows rendering.
 */
export async function makeSymbolPng(bcid: string, text: string, opts: SymbolOptions = {}): Promise<Buffer> {
  const kind = kindOfBcid(bcid)
  const oneD = kind === 'code128' || kind === 'code39'
  const render = {
    bcid,
    text,
    scale: oneD ? 2 : 4,
    paddingwidth: 12,
    paddingheight: 12,
    backgroundcolor: 'FFFFFF',
    ...(oneD ? { height: 12 } : {}),
    ...opts,
  } as Parameters<typeof bwipjs.toBuffer>[0]
  return bwipjs.toBuffer(render)
}

/**
 * Grey levels for zxing. Alpha is composited over white so a transparent PNG reads the same as
 * one on white paper (standards.md Part B: luminance compositing over white).
 */
function luminance(png: PNG): Uint8ClampedArray {
  const { width, height, data } = png
  const lum = new Uint8ClampedArray(width * height)
  for (let i = 0, p = 0; i < lum.length; i++, p += 4) {
    const r = data[p] ?? 0
    const g = data[p + 1] ?? 0
    const b = data[p + 2] ?? 0
    const a = (data[p + 3] ?? 255) / 255
    const l = (r * 299 + g * 587 + b * 114) / 1000
    lum[i] = Math.round(l * a + 255 * (1 - a))
  }
  return lum
}

const FORMAT: Record<SymbolKind, BarcodeFormat> = {
  datamatrix: BarcodeFormat.DATA_MATRIX,
  code128: BarcodeFormat.CODE_128,
  qr: BarcodeFormat.QR_CODE,
  code39: BarcodeFormat.CODE_39,
}

/**
 * Read a PNG with zxing and return its text unchanged: GS1 separators are U+001D, a GS1
 * DataMatrix starts with U+001D, a GS1-128 starts with `]C1`. Throws if nothing is found
 * (a test helper should fail loudly).
 */
export function decodePng(buf: Buffer, kind: SymbolKind): string {
  const png = PNG.sync.read(buf)
  const source = new RGBLuminanceSource(luminance(png), png.width, png.height)
  const bitmap = new BinaryBitmap(new HybridBinarizer(source))
  const reader = new MultiFormatReader()
  const hints = new Map<DecodeHintType, any>([
    [DecodeHintType.POSSIBLE_FORMATS, [FORMAT[kind]]],
    [DecodeHintType.TRY_HARDER, true],
  ])
  // Without ASSUME_GS1 zxing drops Code 128 FNC1 separators silently (standards.md Part B).
  if (kind === 'code128') hints.set(DecodeHintType.ASSUME_GS1, true)
  reader.setHints(hints)
  return reader.decodeWithState(bitmap).getText()
}

/**
 * How the scanner is set up:
 *  - 'zxing'  the text as zxing gives it (what an in-browser camera reader built on zxing sees)
 *  - 'aim'    a hardware scanner with AIM symbology identifiers on: `]d2`/`]C1`/`]Q3` for GS1,
 *             `]d1`/`]C0`/`]Q1`/`]A0` for other data; the FNC1 in first position is reported by
 *             the identifier, never as a character
 *  - 'plain'  a hardware scanner with identifiers off: data only, no leading FNC1/GS
 */
export type ScannerMode = 'zxing' | 'aim' | 'plain'

export interface ScannerOptions {
  mode?: ScannerMode
  /** Keyboard-wedge scanners that cannot type U+001D send this character instead. */
  gsSubstitute?: string
  /** Terminator a scanner appends, e.g. '\r' or '\n' (default none). */
  suffix?: string
}

/**
 * Turn zxing's text into what a scanner configured as `opts` transmits. zxing reports GS1 by a
 * leading GS (DataMatrix), by `]C1` (Code 128 with ASSUME_GS1), or not at all (QR: the FNC1
 * mode indicator is lost), so for QR the caller says whether the symbol was GS1 (`gs1`).
 */
export function scannerString(
  decoded: string,
  kind: SymbolKind,
  opts: ScannerOptions & { gs1?: boolean } = {},
): string {
  const mode = opts.mode ?? 'zxing'
  let data = decoded
  let gs1 = opts.gs1 ?? false
  if (kind === 'datamatrix' && data.startsWith(GS)) {
    gs1 = true
    data = data.slice(1)
  }
  if (kind === 'code128' && data.startsWith(']C1')) {
    gs1 = true
    data = data.slice(3)
  }
  let out: string
  if (mode === 'zxing') {
    out = decoded
  } else {
    const id = mode === 'aim' ? aimIdentifier(kind, gs1) : ''
    out = id + data
  }
  if (opts.gsSubstitute !== undefined) out = out.split(GS).join(opts.gsSubstitute)
  return out + (opts.suffix ?? '')
}

/** AIM (ISO/IEC 15424) symbology identifier a scanner prefixes (standards.md A1.7, A2.5). */
export function aimIdentifier(kind: SymbolKind, gs1: boolean): string {
  switch (kind) {
    case 'datamatrix':
      return gs1 ? ']d2' : ']d1'
    case 'qr':
      return gs1 ? ']Q3' : ']Q1'
    case 'code128':
      return gs1 ? ']C1' : ']C0'
    case 'code39':
      return ']A0'
  }
}

/** Make, read and transmit in one step. `gs1` is inferred from the bcid. */
export async function scanLabel(
  bcid: string,
  text: string,
  opts: ScannerOptions & { symbol?: SymbolOptions } = {},
): Promise<string> {
  const kind = kindOfBcid(bcid)
  const png = await makeSymbolPng(bcid, text, opts.symbol)
  const decoded = decodePng(png, kind)
  return scannerString(decoded, kind, { ...opts, gs1: bcid.startsWith('gs1') })
}

/**
 * Every 2D symbol on a rendered page, found without knowing the layout: a DataMatrix's solid L-shaped
 * finder joins its modules into one dark blob that is square, large next to text and half filled.
 * Each is cut out with a white quiet zone around it and decoded; what cannot be decoded is returned as
 * null, so a caller counting symbols also sees the ones that did not read.
 */
export function decodeSymbolsOnPage(buf: Buffer, kind: SymbolKind = 'datamatrix', opts: { minPx?: number; maxPx?: number } = {}): (string | null)[] {
  const png = PNG.sync.read(buf)
  const { width, height } = png
  const lum = luminance(png)
  const dark = new Uint8Array(width * height)
  for (let i = 0; i < dark.length; i++) dark[i] = lum[i]! < 128 ? 1 : 0
  const seen = new Uint8Array(width * height)
  const minPx = opts.minPx ?? 30
  const maxPx = opts.maxPx ?? 400
  const out: (string | null)[] = []
  const stack: number[] = []
  for (let start = 0; start < dark.length; start++) {
    if (!dark[start] || seen[start]) continue
    let x0 = width, y0 = height, x1 = 0, y1 = 0, n = 0
    stack.push(start)
    seen[start] = 1
    while (stack.length) {
      const p = stack.pop()!
      const x = p % width, y = (p - x) / width
      n++
      if (x < x0) x0 = x
      if (x > x1) x1 = x
      if (y < y0) y0 = y
      if (y > y1) y1 = y
      for (let dy = -1; dy <= 1; dy++) for (let dx = -1; dx <= 1; dx++) {
        const nx = x + dx, ny = y + dy
        if (nx < 0 || ny < 0 || nx >= width || ny >= height) continue
        const q = ny * width + nx
        if (dark[q] && !seen[q]) { seen[q] = 1; stack.push(q) }
      }
    }
    const w = x1 - x0 + 1, h = y1 - y0 + 1
    const fill = n / (w * h)
    if (w < minPx || h < minPx || w > maxPx || h > maxPx || Math.abs(w - h) > 0.2 * Math.max(w, h) || fill < 0.3 || fill > 0.85) continue
    // cut out with a quiet zone of a fifth of the symbol on every side
    const m = Math.ceil(Math.max(w, h) / 5)
    const crop = new PNG({ width: w + 2 * m, height: h + 2 * m })
    crop.data.fill(255)
    for (let y = y0; y <= y1; y++) for (let x = x0; x <= x1; x++) {
      const v = lum[y * width + x]!
      const o = ((y - y0 + m) * crop.width + (x - x0 + m)) * 4
      crop.data[o] = crop.data[o + 1] = crop.data[o + 2] = v
    }
    try {
      out.push(decodePng(PNG.sync.write(crop), kind))
    } catch {
      out.push(null)
    }
  }
  return out
}
