/**
 * A recall notice's list of affected items, read from CSV text and checked before anything is
 * matched against implants.
 *
 * Pure TypeScript (papaparse + our UDI helpers), browser and server. Never throws: every problem
 * comes back as `{ row, column?, message }`, where row 0 is the header and row n the n-th data
 * row (blank lines are skipped and not counted). Messages say what is wrong and how to fix it.
 * A file should only be used when `errors` is empty; `rows` holds the rows that passed, so the
 * screen can show them next to the problems.
 *
 * What a row means (decided here; the matcher must follow it):
 *  - A device identifier is required: `gtin` and/or `hibcc_di`. With both, a unit matches if it
 *    carries either DI.
 *  - Every criterion given must match (AND): lot, serial, and the expiry range
 *    `expiry_from`…`expiry_to` (inclusive; either end may be left open).
 *  - A DI with nothing else means every unit of that item (`allUnits: true`). Notices do recall
 *    whole products, and refusing such a row would push people to invent lot lists.
 */
import Papa from 'papaparse'
import { gtinCheckDigit, hibcCheckChar, isValidGtin } from './udi'

export interface RecallRow {
  /** data row number (1-based; the header is row 0) */
  row: number
  /** GTIN padded to 14 digits, or null */
  gtin: string | null
  /** HIBCC DI (LIC + product number + unit of measure), capitals, or null */
  hibccDi: string | null
  lot: string | null
  serial: string | null
  /** YYYY-MM-DD, inclusive */
  expiryFrom: string | null
  /** YYYY-MM-DD, inclusive */
  expiryTo: string | null
  note: string | null
  /** true when the row gives only a DI: every unit of this item is affected */
  allUnits: boolean
}

export interface CsvProblem {
  /** 1-based data row; 0 = the header / the file as a whole */
  row: number
  column?: string
  message: string
}

export interface RecallCsvResult {
  rows: RecallRow[]
  errors: CsvProblem[]
  /** the recognised column names, in file order */
  columns: string[]
}

export const RECALL_COLUMNS = ['gtin', 'hibcc_di', 'lot', 'serial', 'expiry_from', 'expiry_to', 'note'] as const
export type RecallColumn = (typeof RECALL_COLUMNS)[number]

/** Header spellings seen on notices and spreadsheets, after normalising (see headerKey). */
const RECALL_SYNONYMS: Record<string, RecallColumn> = {
  gtin: 'gtin', di: 'gtin', 'udi-di': 'gtin', 'udi di': 'gtin', 'device identifier': 'gtin', 'gtin-14': 'gtin', 'gtin 14': 'gtin',
  'hibcc di': 'hibcc_di', 'hibc di': 'hibcc_di', hibcc: 'hibcc_di', hibc: 'hibcc_di', 'hibcc udi-di': 'hibcc_di',
  lot: 'lot', batch: 'lot', 'lot number': 'lot', 'batch number': 'lot', 'lot/batch': 'lot', 'batch/lot': 'lot', 'lot no': 'lot',
  serial: 'serial', 'serial number': 'serial', sn: 'serial', 'serial no': 'serial',
  'expiry from': 'expiry_from', 'expiration from': 'expiry_from',
  'expiry to': 'expiry_to', 'expiration to': 'expiry_to',
  note: 'note', notes: 'note', comment: 'note', comments: 'note',
}

// ---------------------------------------------------------------------------------------------
// Field checks, shared with the catalog import
// ---------------------------------------------------------------------------------------------

export type FieldCheck = { ok: true; value: string } | { ok: false; problem: string }

const q = (s: string) => `“${s}”`
const cut = (s: string, n = 40) => (s.length > n ? `${s.slice(0, n)}…` : s)

/** GTIN-8/12/13/14 with a right check digit, returned as 14 digits (GS1 General Specifications; standards.md A1.1, A1.5). */
export function checkGtin(raw: string, copyFrom = 'the notice'): FieldCheck {
  let v = String(raw ?? '').trim()
  // A spreadsheet that treated the GTIN as a number shows it in exponent form; the digits are gone.
  if (/^\d+([.,]\d+)?e\+?\d+$/i.test(v)) {
    return { ok: false, problem: `GTIN ${q(v)} was turned into a number by a spreadsheet. Format the column as text and enter all the digits again.` }
  }
  // "(01)" is the HRI's AI label, not part of the GTIN (GS1 GenSpecs via standards.md A1.4 rule 5): unambiguous to drop.
  if (v.startsWith('(01)')) v = v.slice(4)
  v = v.replace(/ /g, '') // printed GTINs are often grouped with spaces
  if (!/^[0-9]+$/.test(v)) return { ok: false, problem: `GTIN ${q(cut(v))} may contain digits only (8, 12, 13 or 14 of them).` }
  if (![8, 12, 13, 14].includes(v.length)) {
    return { ok: false, problem: `GTIN ${v} has ${v.length} digits; a GTIN has 8, 12, 13 or 14. Check for a missing or extra digit.` }
  }
  // GS1 General Specifications §7.9 check digit (mod 10, weights 3/1; standards.md A1.5)
  if (!isValidGtin(v)) {
    return { ok: false, problem: `GTIN ${v} has a wrong check digit (should end in ${gtinCheckDigit(v.slice(0, -1))}). Copy it again from ${copyFrom}.` }
  }
  return { ok: true, value: v.padStart(14, '0') }
}

/** HIBCC DI = LIC (letter + 3 alphanumerics) + product number (1–18 of A–Z 0–9) + unit-of-measure digit (ANSI/HIBC 2.6 via standards.md A2.1). */
export function checkHibccDi(raw: string): FieldCheck {
  const v = String(raw ?? '').trim().toUpperCase() // HIBC data has capitals only (A2.4): lower case can only be typing
  if (v.startsWith('+') || v.startsWith('*')) {
    const sym = v.replace(/^\*|\*$/g, '')
    const inner = sym.slice(1, -1)
    const hint = sym.length > 2 && hibcCheckChar(sym.slice(0, -1)) === sym.slice(-1) && !inner.includes('/') ? ` (here probably ${inner})` : ''
    return { ok: false, problem: `HIBCC DI ${q(cut(v))} is the whole barcode. Enter only the DI, without the leading “+” and the check character${hint}.` }
  }
  if (!/^[A-Z0-9]+$/.test(v)) {
    return { ok: false, problem: `HIBCC DI ${q(cut(v))} may contain only letters A–Z and digits (no spaces or punctuation).` }
  }
  if (v.length < 6 || v.length > 23) {
    return { ok: false, problem: `HIBCC DI ${q(cut(v))} has ${v.length} characters; an HIBCC DI has 6 to 23 (labeler code, product number, unit-of-measure digit).` }
  }
  if (!/^[A-Z]/.test(v)) return { ok: false, problem: `HIBCC DI ${q(v)} must start with a letter (the labeler code starts with a letter).` }
  if (!/[0-9]$/.test(v)) return { ok: false, problem: `HIBCC DI ${q(v)} must end with the unit-of-measure digit (0 for a single unit).` }
  return { ok: true, value: v }
}

// GS1 AI encodable character set 82 (GS1 General Specifications; standards.md A1.2)
const CSET82 = /^[!"%&'()*+,\-./0-9:;<=>?A-Z_a-z]*$/
// HIBC 43-character set (ANSI/HIBC 2.6; standards.md A2.4)
const HIBC43 = /^[0-9A-Z\-. $/+%]*$/

function firstBad(v: string, ok: RegExp): string {
  for (const ch of v) if (!ok.test(ch)) return ch
  return ''
}

function describeChar(ch: string): string {
  if (ch === ' ') return 'a space'
  const cp = ch.codePointAt(0) ?? 0
  if (cp < 0x20 || cp === 0x7f) return 'a control character'
  if (/[\p{C}\p{Z}]/u.test(ch)) return 'an invisible character'
  return q(ch)
}

/**
 * Lot or serial as the label carries it. GS1: at most 20 characters of CSET 82 (AI 10/21 X..20,
 * standards.md A1.1–A1.2). HIBCC: at most 18 characters of the 43-character set (A2.2, A2.4).
 */
export function checkLotOrSerial(raw: string, what: 'lot' | 'serial', issuer: 'GS1' | 'HIBCC'): FieldCheck {
  const v = String(raw ?? '').trim()
  const max = issuer === 'GS1' ? 20 : 18
  if (v.length > max) {
    return { ok: false, problem: `${what} ${q(cut(v, 30))} is ${v.length} characters long; a${issuer === 'HIBCC' ? 'n HIBCC' : ' GS1'} ${what} has at most ${max}. Check that two values did not run together.` }
  }
  if (issuer === 'GS1' && !CSET82.test(v)) {
    const bad = firstBad(v, /[!"%&'()*+,\-./0-9:;<=>?A-Z_a-z]/)
    return { ok: false, problem: `${what} ${q(cut(v, 30))} contains ${describeChar(bad)}, which a GS1 ${what} cannot contain (allowed: letters, digits and ! " % & ' ( ) * + , - . / : ; < = > ? _). Copy it exactly as printed on the notice.` }
  }
  if (issuer === 'HIBCC' && !HIBC43.test(v)) {
    const bad = firstBad(v, /[0-9A-Z\-. $/+%]/)
    const hint = /[a-z]/.test(bad) ? ' HIBCC labels use capital letters.' : ''
    return { ok: false, problem: `${what} ${q(cut(v, 30))} contains ${describeChar(bad)}, which an HIBCC ${what} cannot contain (allowed: A–Z, 0–9, space and - . $ / + %).${hint}` }
  }
  return { ok: true, value: v }
}

const MONTHS = ['January', 'February', 'March', 'April', 'May', 'June', 'July', 'August', 'September', 'October', 'November', 'December']
const isLeap = (y: number) => (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0
const daysIn = (y: number, m: number) => [31, isLeap(y) ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][m - 1] ?? 0

/** A calendar date written YYYY-MM-DD (ISO 8601 / 21 CFR 801.18 style, standards.md A3), and a real one. */
export function checkIsoDate(raw: string, name: string): FieldCheck {
  const v = String(raw ?? '').trim()
  const m = /^(\d{4})-(\d{2})-(\d{2})$/.exec(v)
  if (!m) return { ok: false, problem: `${name} ${q(cut(v))} must be a date written YYYY-MM-DD, for example 2027-03-31.` }
  const y = Number(m[1]), mo = Number(m[2]), d = Number(m[3])
  if (mo < 1 || mo > 12) return { ok: false, problem: `${name} ${v} is not a real date (there is no month ${m[2]}). Write it YYYY-MM-DD.` }
  if (d < 1 || d > daysIn(y, mo)) {
    return { ok: false, problem: `${name} ${v} is not a real date (${MONTHS[mo - 1]} ${y} has ${daysIn(y, mo)} days).` }
  }
  return { ok: true, value: v }
}

// ---------------------------------------------------------------------------------------------
// Headers
// ---------------------------------------------------------------------------------------------

/** Lower case, trimmed, runs of spaces/underscores as one space: "Lot  Number" = "lot_number". */
const headerKey = (h: string) => String(h ?? '').trim().toLowerCase().replace(/[\s_]+/g, ' ')

/** Idempotent: papaparse calls transformHeader twice, the second time on its own output. */
function recallHeader(h: string): string {
  return RECALL_SYNONYMS[headerKey(h)] ?? String(h ?? '').trim().toLowerCase()
}

const UNKNOWN_COLUMN = (x: string) => `Unknown column ${q(x)}. Use gtin, hibcc_di, lot, serial, expiry_from, expiry_to or note.`

// ---------------------------------------------------------------------------------------------
// parseRecallCsv
// ---------------------------------------------------------------------------------------------

type Raw = Record<string, string | string[] | undefined>
const DUP = '\u0000#' // a NUL is never in a real header; if one is, that column is merely reported as a repeat

export function parseRecallCsv(text: string): RecallCsvResult {
  try {
    return parseOrFail(text)
  } catch {
    return { rows: [], columns: [], errors: [{ row: 0, message: 'The file could not be read. Save it again as CSV (UTF-8) and retry; if it keeps failing, tell the support team.' }] }
  }
}

function parseOrFail(input: string): RecallCsvResult {
  const errors: CsvProblem[] = []
  if (typeof input !== 'string') return { rows: [], columns: [], errors: [{ row: 0, message: 'No file content was received. Choose the CSV file again.' }] }
  const text = input.replace(/^\uFEFF/, '') // byte-order mark from spreadsheet exports (papaparse also strips it)
  if (text.trim() === '') {
    return { rows: [], columns: [], errors: [{ row: 0, message: 'The file is empty. It needs a header line (e.g. gtin,lot,serial,expiry_from,expiry_to,note) and one line per affected item.' }] }
  }

  // papaparse calls transformHeader twice (raw headers, then its own output) and renames repeated
  // names itself with a console warning. Making every name unique on the first call (a repeat gets
  // DUP + its index) avoids both; the second call returns the name unchanged.
  const rawHeaders: string[] = []
  const produced = new Set<string>()
  const parsed = Papa.parse<Raw>(text, {
    header: true,
    skipEmptyLines: 'greedy',
    transformHeader: (h: string, i: number) => {
      if (rawHeaders[i] !== undefined) return h
      rawHeaders[i] = String(h ?? '').trim()
      let name = recallHeader(h)
      if (produced.has(name)) name = `${name}${DUP}${i}`
      produced.add(name)
      return name
    },
  })
  const fields = parsed.meta.fields ?? []
  const data = parsed.data

  // --- header -------------------------------------------------------------------------------
  const columns: string[] = []
  const colOf = new Map<string, RecallColumn>() // field name → column
  const reportedUnknown = new Set<string>()
  fields.forEach((f, i) => {
    const isRepeat = f.includes(DUP)
    const base = isRepeat ? f.slice(0, f.indexOf(DUP)) : f
    const original = rawHeaders[i] ?? base
    if (base === '') {
      // A trailing delimiter makes a nameless, empty column: harmless unless it holds values.
      if (data.some((r) => typeof r[f] === 'string' && (r[f] as string).trim() !== '')) {
        errors.push({ row: 0, message: `Column ${i + 1} has values but no name. Give it a name (gtin, hibcc_di, lot, serial, expiry_from, expiry_to or note) or delete it.` })
      }
      return
    }
    if ((RECALL_COLUMNS as readonly string[]).includes(base)) {
      if (isRepeat) {
        errors.push({ row: 0, column: base, message: `The column ${base} appears more than once (column ${i + 1} is another ${q(original)}). Keep one and delete the others.` })
        return
      }
      colOf.set(f, base as RecallColumn)
      columns.push(base)
      return
    }
    if (reportedUnknown.has(base)) return
    reportedUnknown.add(base)
    if (checkGtin(original).ok || /^\d{8,14}$/.test(original)) {
      errors.push({ row: 0, column: original, message: `The first line must name the columns (gtin, hibcc_di, lot, serial, expiry_from, expiry_to, note), but it looks like data (${q(cut(original))}). Add a header line.` })
    } else {
      errors.push({ row: 0, column: original, message: UNKNOWN_COLUMN(original) })
    }
  })
  if (!columns.includes('gtin') && !columns.includes('hibcc_di')) {
    if (!errors.some((e) => e.message.startsWith('The first line must name'))) {
      errors.push({ row: 0, message: 'The file has no gtin column (or hibcc_di for HIBCC-labelled items). Each row needs the device identifier of the recalled item.' })
    }
    return { rows: [], errors, columns }
  }
  if (data.length === 0) {
    errors.push({ row: 0, message: 'The file has a header line but no items. Add one line per affected item.' })
    return { rows: [], errors, columns }
  }

  // --- papaparse's own findings ---------------------------------------------------------------
  const rowsWithParseErrors = new Set<number>()
  for (const e of csvParseProblems(text, parsed, data.length)) {
    errors.push(e)
    if (e.row > 0) rowsWithParseErrors.add(e.row)
  }

  // --- rows -------------------------------------------------------------------------------------
  const rows: RecallRow[] = []
  const seen = new Map<string, number>()
  data.forEach((r, index) => {
    const rowNo = index + 1
    const get = (c: RecallColumn): string => {
      for (const [f, col] of colOf) if (col === c) { const v = r[f]; return typeof v === 'string' ? v.trim() : '' }
      return ''
    }
    const rowErrors: CsvProblem[] = []
    const bad = (column: RecallColumn | undefined, problem: string) =>
      rowErrors.push(column ? { row: rowNo, column, message: `Row ${rowNo}: ${problem}` } : { row: rowNo, message: `Row ${rowNo}: ${problem}` })

    const gtinRaw = get('gtin'), hibccRaw = get('hibcc_di')
    let gtin: string | null = null, hibccDi: string | null = null
    if (gtinRaw) { const c = checkGtin(gtinRaw); if (c.ok) gtin = c.value; else bad('gtin', c.problem) }
    if (hibccRaw) { const c = checkHibccDi(hibccRaw); if (c.ok) hibccDi = c.value; else bad('hibcc_di', c.problem) }
    if (!gtinRaw && !hibccRaw) {
      bad(undefined, 'no device identifier. Fill in the gtin (or hibcc_di for HIBCC-labelled items) of the recalled item.')
    }
    // The DI decides which character set the label's lot/serial uses.
    const issuer: 'GS1' | 'HIBCC' = gtinRaw || !hibccRaw ? 'GS1' : 'HIBCC'
    const pi = (c: 'lot' | 'serial'): string | null => {
      const v = get(c)
      if (!v) return null
      const k = checkLotOrSerial(v, c, issuer)
      if (!k.ok) { bad(c, k.problem); return null }
      return k.value
    }
    const lot = pi('lot'), serial = pi('serial')
    const date = (c: 'expiry_from' | 'expiry_to'): string | null => {
      const v = get(c)
      if (!v) return null
      const k = checkIsoDate(v, c)
      if (!k.ok) { bad(c, k.problem); return null }
      return k.value
    }
    const expiryFrom = date('expiry_from'), expiryTo = date('expiry_to')
    if (expiryFrom && expiryTo && expiryFrom > expiryTo) {
      bad('expiry_to', `expiry_from ${expiryFrom} is after expiry_to ${expiryTo}. Swap them, or correct one of them.`)
    }
    const noteRaw = get('note')
    // common practice: a note is a remark, not a document; a huge one is usually a broken quote
    if (noteRaw.length > 500) bad('note', `the note is ${noteRaw.length} characters long (at most 500). Shorten it, or check for a missing closing quote.`)

    // A row papaparse could not split cleanly: its field errors would only be noise.
    if (rowsWithParseErrors.has(rowNo)) return
    if (rowErrors.length) { errors.push(...rowErrors); return }

    const key = JSON.stringify([gtin, hibccDi, lot, serial, expiryFrom, expiryTo])
    const first = seen.get(key)
    if (first !== undefined) {
      errors.push({ row: rowNo, message: `Row ${rowNo} repeats row ${first} (same device identifier, lot, serial and expiry range). Delete one of them.` })
      return
    }
    seen.set(key, rowNo)
    rows.push({
      row: rowNo, gtin, hibccDi, lot, serial, expiryFrom, expiryTo,
      note: noteRaw ? noteRaw : null,
      allUnits: !lot && !serial && !expiryFrom && !expiryTo,
    })
  })
  return { rows, errors: sortProblems(errors), columns }
}

/** By row (file order); within a row, as found. Array.prototype.sort is stable (ES2019). */
export function sortProblems(errors: CsvProblem[]): CsvProblem[] {
  return [...errors].sort((a, b) => a.row - b.row)
}

/**
 * papaparse's structural errors as row problems. Quote errors carry a character offset, so the
 * message names the file line exactly; the data row is estimated from the non-blank lines before
 * it (quoted line breaks earlier in the file can shift that estimate, never the line number).
 */
export function csvParseProblems(text: string, parsed: Papa.ParseResult<unknown>, dataRows: number): CsvProblem[] {
  const out: CsvProblem[] = []
  const sep = parsed.meta.delimiter === ';' ? 'semicolon' : parsed.meta.delimiter === '\t' ? 'tab' : 'comma'
  for (const e of parsed.errors) {
    if (e.code === 'UndetectableDelimiter') continue // a one-column file: nothing to detect
    if (e.code === 'TooFewFields') continue // missing trailing values are read as blank
    if (e.code === 'TooManyFields') {
      const row = typeof e.row === 'number' ? e.row + 1 : 0
      out.push({ row, message: `Row ${row} has more values than the header has columns. A value probably contains the separator (${sep}); put that value in double quotes.` })
      continue
    }
    if (e.type === 'Quotes') {
      const at = typeof e.index === 'number' ? Math.max(0, Math.min(e.index, text.length)) : text.length
      const before = text.slice(0, at).split(/\r\n|\n|\r/)
      const line = before.length
      const nonBlank = before.filter((l) => l.trim() !== '').length // includes the header line
      const row = dataRows > 0 ? Math.min(dataRows, Math.max(1, nonBlank - 1)) : 0
      if (out.some((o) => o.message.includes(`(line ${line} of the file)`))) continue // one message per spot
      out.push({ row, message: `Row ${row} (line ${line} of the file): a double quote is not closed or is misplaced, so the rest of the file cannot be read reliably. Quote whole values ("like this") and write a quote inside a value as "".` })
      continue
    }
    const row = typeof e.row === 'number' ? Math.max(0, Math.min(dataRows, e.row)) : 0
    out.push({ row, message: `${row ? `Row ${row}: ` : ''}${e.message}.` })
  }
  return out
}

export type RecallMatch = 'match' | 'no' | 'unknown'

/**
 * Whether one recorded unit falls under a row, following the rules in the file comment.
 * 'unknown' when the row asks for a lot, serial or expiry the unit has no value for: such a
 * unit may be affected, so a person must look (safety first: never silently "not affected").
 */
export function matchRecallRow(
  r: RecallRow,
  unit: { gtin?: string | null; hibccDi?: string | null; lot?: string | null; serial?: string | null; expiry?: string | null },
): RecallMatch {
  const g = unit.gtin && isValidGtin(unit.gtin) ? unit.gtin.padStart(14, '0') : null
  const h = unit.hibccDi ? unit.hibccDi.trim().toUpperCase() : null
  if (!((r.gtin !== null && g === r.gtin) || (r.hibccDi !== null && h === r.hibccDi))) return 'no'
  let unknown = false
  const check = (wanted: string | null, have: string | null | undefined, ok: (v: string) => boolean) => {
    if (wanted === null) return true
    if (have === null || have === undefined || have === '') { unknown = true; return true }
    return ok(have)
  }
  if (!check(r.lot, unit.lot, (v) => v === r.lot)) return 'no'
  if (!check(r.serial, unit.serial, (v) => v === r.serial)) return 'no'
  if (!check(r.expiryFrom, unit.expiry, (v) => v >= r.expiryFrom!)) return 'no'
  if (!check(r.expiryTo, unit.expiry, (v) => v <= r.expiryTo!)) return 'no'
  return unknown ? 'unknown' : 'match'
}
