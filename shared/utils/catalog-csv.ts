/**
 * Item master (catalog) import: map a CSV's columns to our fields and check every row before
 * anything is written. Pure TypeScript, browser and server; never throws on user data.
 *
 * The rules mirror the catalog_items table (db/migrations/…cases-and-sizing.ts): kinds, the
 * sizes each kind needs, GTIN as 14 digits, and the DI (GTIN or HIBCC DI) as the upsert key.
 *
 * Two ways to use it:
 *  - `validateCatalogRows(rows, mapping)` for rows already in memory;
 *  - streaming (large files): `createCatalogValidator(mapping)` and feed it rows from papaparse's
 *    `step`/`chunk` callbacks (use CATALOG_PAPA_CONFIG); it keeps only the DIs seen so far, to
 *    catch duplicates. `validateCatalogRow` is the stateless per-row check underneath.
 * Row numbers: 1 = first data row, 0 = the header / the mapping.
 */
import { checkGtin, checkHibccDi, type CsvProblem } from './recall-csv'

export const CATALOG_FIELDS = [
  { key: 'kind', label: 'Kind' },
  { key: 'description', label: 'Description' },
  { key: 'maker', label: 'Maker' },
  { key: 'reference', label: 'Reference (catalogue number)' },
  { key: 'gtin', label: 'GTIN' },
  { key: 'hibcc_di', label: 'HIBCC DI' },
  { key: 'diameter_mm', label: 'Diameter (mm)' },
  { key: 'length_mm', label: 'Length (mm)' },
  { key: 'angle_deg', label: 'Angle (°)' },
  { key: 'side', label: 'Side' },
  { key: 'nail_type', label: 'Nail type (short/long)' },
  { key: 'material', label: 'Material' },
  { key: 'unit_cost', label: 'Unit cost' },
  { key: 'implant_card', label: 'Implant card' },
] as const

export type CatalogField = (typeof CATALOG_FIELDS)[number]['key']
export const CATALOG_FIELD_LABELS = Object.fromEntries(CATALOG_FIELDS.map((f) => [f.key, f.label])) as Record<CatalogField, string>

export type CatalogKind = 'nail' | 'head_element' | 'distal_screw' | 'set_screw' | 'end_cap' | 'other'

/** One row ready for the catalog_items upsert (column names as in the table; maker by name). */
export interface CatalogItemInput {
  row: number
  kind: CatalogKind
  description: string
  maker: string | null
  reference: string | null
  /** 14 digits */
  gtin: string | null
  hibcc_di: string | null
  diameter_mm: number | null
  length_mm: number | null
  angle_deg: number | null
  side: 'left' | 'right' | null
  nail_type: 'short' | 'long' | null
  material: string
  unit_cost: number
  implant_card: boolean
}

export type CatalogMapping = Record<string, CatalogField | null>

/** Papaparse settings for a catalog file (headers kept as written, for the mapping screen). */
export const CATALOG_PAPA_CONFIG = {
  header: true,
  skipEmptyLines: 'greedy',
  transformHeader: (h: string) => String(h ?? '').replace(/^\uFEFF/, '').trim(),
} as const

// ---------------------------------------------------------------------------------------------
// Mapping
// ---------------------------------------------------------------------------------------------

/**
 * Header → comparison key: lower case; a unit in brackets dropped ("Diameter (mm)"); "_", "-",
 * "/" and runs of spaces as one space. "Neck-shaft angle" = "neck shaft angle".
 */
function headerKey(h: string): string {
  return String(h ?? '')
    .replace(/^\uFEFF/, '')
    .toLowerCase()
    .replace(/\(([^)]*)\)|\[([^\]]*)\]/g, ' ')
    .replace(/[_\-/.:#]+/g, ' ')
    .replace(/\s+/g, ' ')
    .trim()
}

const SYNONYMS: Record<CatalogField, string[]> = {
  kind: ['kind', 'type', 'item type', 'component', 'component type', 'category', 'item kind'],
  description: ['description', 'desc', 'name', 'item name', 'product name', 'item description', 'product description', 'article description'],
  maker: ['maker', 'manufacturer', 'mfr', 'mfg', 'vendor', 'supplier', 'brand', 'manufacturer name'],
  reference: ['reference', 'ref', 'ref no', 'ref number', 'catalogue number', 'catalog number', 'catalogue no', 'catalog no', 'cat no', 'article number', 'item number', 'part number', 'product code', 'sku'],
  gtin: ['gtin', 'gtin 14', 'gtin14', 'ean', 'udi di', 'di', 'device identifier', 'primary di', 'gs1 di'],
  hibcc_di: ['hibcc di', 'hibc di', 'hibcc', 'hibc', 'hibcc udi di'],
  diameter_mm: ['diameter', 'diameter mm', 'dia', 'ø', 'outer diameter', 'nail diameter', 'screw diameter'],
  length_mm: ['length', 'length mm', 'len', 'nail length', 'screw length'],
  angle_deg: ['angle', 'angle deg', 'ccd angle', 'ccd', 'neck shaft angle', 'nsa', 'caput collum diaphyseal angle', 'ccd angle deg'],
  side: ['side', 'laterality', 'left right'],
  nail_type: ['nail type', 'nail length type', 'short long', 'length class', 'nail class'],
  material: ['material', 'alloy'],
  unit_cost: ['unit cost', 'cost', 'price', 'unit price', 'list price', 'cost per unit'],
  implant_card: ['implant card', 'card', 'implant card required', 'patient card', 'patient implant card'],
}

const HEADER_TO_FIELD = new Map<string, CatalogField>()
for (const f of CATALOG_FIELDS) {
  for (const s of [f.key, f.label, ...SYNONYMS[f.key]]) {
    const k = headerKey(s)
    if (!HEADER_TO_FIELD.has(k)) HEADER_TO_FIELD.set(k, f.key)
  }
}

/** Best guess per header (case/space-insensitive synonyms); each field is given to the first header that fits. */
export function guessMapping(headers: string[]): CatalogMapping {
  const out: CatalogMapping = {}
  const taken = new Set<CatalogField>()
  for (const h of Array.isArray(headers) ? headers : []) {
    if (typeof h !== 'string' || h in out) continue
    const f = HEADER_TO_FIELD.get(headerKey(h)) ?? null
    out[h] = f && !taken.has(f) ? f : null
    if (f) taken.add(f)
  }
  return out
}

/** What the mapping itself lacks or repeats (row 0); an import cannot start while this is non-empty. */
export function mappingProblems(mapping: CatalogMapping): CsvProblem[] {
  const errors: CsvProblem[] = []
  const byField = new Map<CatalogField, string[]>()
  for (const [header, f] of Object.entries(mapping ?? {})) {
    if (!f) continue
    if (!CATALOG_FIELDS.some((x) => x.key === f)) {
      errors.push({ row: 0, column: header, message: `Column ${quote(header)} is mapped to ${quote(String(f))}, which is not a catalog field.` })
      continue
    }
    byField.set(f, [...(byField.get(f) ?? []), header])
  }
  for (const [f, hs] of byField) {
    if (hs.length > 1) {
      errors.push({ row: 0, column: hs[1], message: `Columns ${hs.map(quote).join(' and ')} are both mapped to ${CATALOG_FIELD_LABELS[f]}. Map only one of them.` })
    }
  }
  for (const f of ['kind', 'description'] as const) {
    if (!byField.has(f)) errors.push({ row: 0, message: `No column is mapped to ${CATALOG_FIELD_LABELS[f]}. Choose the column that holds it.` })
  }
  if (!byField.has('gtin') && !byField.has('hibcc_di')) {
    errors.push({ row: 0, message: 'No column is mapped to GTIN or HIBCC DI. Every item needs its device identifier: it is how the import finds an item again.' })
  }
  return errors
}

// ---------------------------------------------------------------------------------------------
// Value parsers
// ---------------------------------------------------------------------------------------------

const quote = (s: string) => `“${s.length > 40 ? `${s.slice(0, 40)}…` : s}”`

const KIND_SYNONYMS: Record<string, CatalogKind> = {
  nail: 'nail', 'intramedullary nail': 'nail', 'im nail': 'nail', 'cephalomedullary nail': 'nail', 'trochanteric nail': 'nail',
  'head element': 'head_element', 'lag screw': 'head_element', 'helical blade': 'head_element', blade: 'head_element',
  'cephalic screw': 'head_element', 'head screw': 'head_element', 'neck screw': 'head_element', 'hip screw': 'head_element',
  'distal screw': 'distal_screw', 'locking screw': 'distal_screw', 'distal locking screw': 'distal_screw', 'interlocking screw': 'distal_screw',
  'set screw': 'set_screw', setscrew: 'set_screw',
  'end cap': 'end_cap', endcap: 'end_cap',
  other: 'other',
}

type Parsed<T> = { ok: true; value: T } | { ok: false; problem: string }

function parseKind(v: string): Parsed<CatalogKind> {
  const k = KIND_SYNONYMS[v.toLowerCase().replace(/[_\-]+/g, ' ').replace(/\s+/g, ' ').trim()]
  if (k) return { ok: true, value: k }
  return { ok: false, problem: `kind ${quote(v)} is not one we know. Use nail, head_element (lag screw), distal_screw (locking screw), set_screw, end_cap or other.` }
}

/** Units a value may carry after (or, for money, before) the number; anything else is refused, never converted. */
function stripUnit(v: string, unit: 'mm' | 'deg' | 'money'): string {
  if (unit === 'mm') return v.replace(/\s*mm$/i, '')
  if (unit === 'deg') return v.replace(/\s*(°|deg|degrees?)$/i, '')
  return v.replace(/^[€$£¥]\s*/, '').replace(/\s*[€$£¥]$/, '').replace(/^[A-Z]{3}\s+/, '').replace(/\s+[A-Z]{3}$/, '')
}

/**
 * A decimal number as people type it: "11.5", "11,5", "11.5 mm", "1 180,00", "1,180.00".
 * common practice (spreadsheet locales): the last of "," or "." is the decimal mark when both
 * occur; a lone "," is a decimal comma unless exactly three digits follow it ("1,180" could be
 * 1180 or 1.18, so it is refused and the message says how to write it).
 */
export function parseDecimal(raw: string, unit: 'mm' | 'deg' | 'money' | null = null): Parsed<number> {
  let v = String(raw ?? '').trim().replace(/[\u00A0\u202F]/g, ' ')
  if (unit) v = stripUnit(v, unit).trim()
  if (/^[+-]?\d{1,3}( \d{3})+([.,]\d+)?$/.test(v)) v = v.replace(/ /g, '') // "1 180,00": spaces group thousands
  const hasDot = v.includes('.'), hasComma = v.includes(',')
  if (hasDot && hasComma) {
    const dec = v.lastIndexOf('.') > v.lastIndexOf(',') ? '.' : ','
    const grp = dec === '.' ? ',' : '.'
    const [intPart, frac, ...rest] = v.split(dec)
    if (rest.length || !new RegExp(`^[+-]?\\d{1,3}(\\${grp}\\d{3})+$`).test(intPart ?? '') || !/^\d+$/.test(frac ?? '')) {
      return { ok: false, problem: 'is not a number we can read. Write it like 11.5 or 11,5.' }
    }
    v = `${(intPart ?? '').split(grp).join('')}.${frac}`
  } else if (hasComma) {
    if (/^[+-]?\d+,\d{3}$/.test(v)) return { ok: false, problem: 'is ambiguous (thousands or decimals?). Write it without a thousands separator, e.g. 1180 or 1.18.' }
    if (!/^[+-]?\d*,\d+$/.test(v)) return { ok: false, problem: 'is not a number we can read. Write it like 11.5 or 11,5.' }
    v = v.replace(',', '.')
  }
  if (!/^[+-]?(\d+(\.\d*)?|\.\d+)$/.test(v)) {
    const wrongUnit = unit === 'mm' && /\d\s*(cm|m|in|inch|")$/i.test(String(raw).trim())
    return { ok: false, problem: wrongUnit ? 'must be in millimetres (e.g. 11.5 or 11.5 mm).' : 'is not a number we can read. Write it like 11.5 or 11,5.' }
  }
  const n = Number(v)
  if (!Number.isFinite(n)) return { ok: false, problem: 'is not a number we can read.' }
  return { ok: true, value: n }
}

const decimals = (n: number) => (String(n).split('.')[1] ?? '').length

function parseYesNo(v: string): Parsed<boolean> {
  const k = v.trim().toLowerCase()
  if (['yes', 'y', 'true', '1'].includes(k)) return { ok: true, value: true }
  if (['no', 'n', 'false', '0', ''].includes(k)) return { ok: true, value: false } // blank = the table's default (false)
  return { ok: false, problem: `implant_card ${quote(v)} must be yes or no (also true/false or 1/0).` }
}

// ---------------------------------------------------------------------------------------------
// Rows
// ---------------------------------------------------------------------------------------------

export interface CatalogRowResult {
  item: CatalogItemInput | null
  errors: CsvProblem[]
  /** the row's device identifiers that are valid, even when other fields are not (for duplicate checks) */
  di: { gtin: string | null; hibcc_di: string | null }
}

/**
 * Plausible size ranges, to catch a value in the wrong column or the wrong unit before it reaches
 * the sizing engine. common practice: cephalomedullary nails are roughly 9–17 mm × 170–480 mm at
 * 120–140°, screws 20–130 mm; the ranges are set wide around that, and within the table's
 * numeric(5,2)/(6,2) columns.
 */
const RANGES = {
  diameter_mm: { min: 1, max: 40 },
  length_mm: { min: 2, max: 700 },
  angle_deg: { min: 90, max: 170 },
} as const

/**
 * One row on its own (no duplicate check): the item, or the reasons it cannot be imported.
 * `rowNumber` is used in every message ("Row 12: …").
 */
export function validateCatalogRow(row: Record<string, unknown>, mapping: CatalogMapping, rowNumber: number): CatalogRowResult {
  try {
    return validateRowOrFail(row, mapping, rowNumber)
  } catch {
    return { item: null, di: { gtin: null, hibcc_di: null }, errors: [{ row: rowNumber, message: `Row ${rowNumber} could not be read. Check it for unusual characters; if it keeps failing, tell the support team.` }] }
  }
}

function validateRowOrFail(row: Record<string, unknown>, mapping: CatalogMapping, n: number): CatalogRowResult {
  const errors: CsvProblem[] = []
  const headerOf = new Map<CatalogField, string>()
  for (const [h, f] of Object.entries(mapping ?? {})) if (f && !headerOf.has(f)) headerOf.set(f, h)
  const get = (f: CatalogField): string => {
    const h = headerOf.get(f)
    const v = h === undefined || row === null || typeof row !== 'object' ? undefined : row[h]
    return typeof v === 'string' ? v.trim() : typeof v === 'number' && Number.isFinite(v) ? String(v) : ''
  }
  const bad = (f: CatalogField | undefined, problem: string) =>
    errors.push(f ? { row: n, column: headerOf.get(f) ?? f, message: `Row ${n}: ${problem}` } : { row: n, message: `Row ${n}: ${problem}` })

  // kind (catalog_items.kind CHECK)
  const kindRaw = get('kind')
  let kind: CatalogKind | null = null
  if (!kindRaw) bad('kind', 'kind is empty. Use nail, head_element, distal_screw, set_screw, end_cap or other.')
  else { const k = parseKind(kindRaw); if (k.ok) kind = k.value; else bad('kind', k.problem) }

  const description = get('description')
  if (!description) bad('description', 'description is empty. Give the item the name staff will recognise, with its size.')
  else if (description.length > 200) bad('description', `description is ${description.length} characters long; keep it to 200.`) // common practice: fits a label line

  // DI: at least one, each valid (GS1 GenSpecs check digit; ANSI/HIBC DI structure — see recall-csv)
  const gtinRaw = get('gtin'), hibccRaw = get('hibcc_di')
  let gtin: string | null = null, hibcc: string | null = null
  if (gtinRaw) { const c = checkGtin(gtinRaw, "the label or the supplier's list"); if (c.ok) gtin = c.value; else bad('gtin', c.problem) }
  if (hibccRaw) { const c = checkHibccDi(hibccRaw); if (c.ok) hibcc = c.value; else bad('hibcc_di', c.problem) }
  if (!gtinRaw && !hibccRaw) bad(undefined, 'no GTIN and no HIBCC DI. Every item needs its device identifier from the label.')

  const num = (f: 'diameter_mm' | 'length_mm' | 'angle_deg', unit: 'mm' | 'deg', what: string): number | null => {
    const v = get(f)
    if (!v) return null
    const p = parseDecimal(v, unit)
    if (!p.ok) { bad(f, `${what} ${quote(v)} ${p.problem}`); return null }
    const r = RANGES[f]
    if (p.value < r.min || p.value > r.max) { bad(f, `${what} ${quote(v)} is outside ${r.min}–${r.max} ${unit === 'mm' ? 'mm' : '°'}. Check the column and the unit.`); return null }
    if (decimals(p.value) > 2) { bad(f, `${what} ${quote(v)} has more than two decimals.`); return null } // numeric(…,2) columns
    return p.value
  }
  const diameter = num('diameter_mm', 'mm', 'diameter')
  const length = num('length_mm', 'mm', 'length')
  const angle = num('angle_deg', 'deg', 'angle')

  const sideRaw = get('side').toLowerCase()
  let side: 'left' | 'right' | null = null
  if (sideRaw === 'left' || sideRaw === 'l') side = 'left'
  else if (sideRaw === 'right' || sideRaw === 'r') side = 'right'
  else if (!['', '-', 'unsided', 'none', 'n/a'].includes(sideRaw)) bad('side', `side ${quote(get('side'))} must be left, right or blank (blank = fits either side).`)

  const ntRaw = get('nail_type').toLowerCase()
  let nailType: 'short' | 'long' | null = null
  if (ntRaw === 'short' || ntRaw === 'long') nailType = ntRaw
  else if (ntRaw) bad('nail_type', `nail_type ${quote(get('nail_type'))} must be short or long.`)

  // What each kind needs (catalog_items CHECK constraints; sizing engine inputs)
  if (kind === 'nail') {
    const missing = [
      diameter === null && !get('diameter_mm') ? 'diameter' : null,
      length === null && !get('length_mm') ? 'length' : null,
      angle === null && !get('angle_deg') ? 'angle' : null,
      nailType === null && !ntRaw ? 'nail_type (short or long)' : null,
    ].filter(Boolean)
    if (missing.length) bad(undefined, `a nail needs ${missing.join(', ')}. Fill in ${missing.length > 1 ? 'these columns' : 'this column'}.`)
  } else if (kind) {
    if ((kind === 'head_element' || kind === 'distal_screw') && length === null && !get('length_mm')) {
      bad('length_mm', `a ${kind === 'head_element' ? 'head element' : 'distal screw'} needs its length in mm.`)
    }
    if (ntRaw) bad('nail_type', `nail_type is only for nails, but this row is a ${kind.replace('_', ' ')}. Leave it blank or correct the kind.`)
  }

  let unitCost = 0
  const costRaw = get('unit_cost')
  if (costRaw) {
    const p = parseDecimal(costRaw, 'money')
    if (!p.ok) bad('unit_cost', `unit_cost ${quote(costRaw)} ${p.problem}`)
    else if (p.value < 0) bad('unit_cost', `unit_cost ${quote(costRaw)} is negative.`)
    else if (p.value >= 1e8 || decimals(p.value) > 2) bad('unit_cost', `unit_cost ${quote(costRaw)} must be an amount with at most two decimals.`) // numeric(10,2)
    else unitCost = p.value
  }

  let implantCard = false
  const cardRaw = get('implant_card')
  const c = parseYesNo(cardRaw)
  if (c.ok) implantCard = c.value
  else bad('implant_card', c.problem)

  const text = (f: CatalogField, max: number, what: string): string | null => {
    const v = get(f)
    if (v.length > max) { bad(f, `${what} is ${v.length} characters long; keep it to ${max}.`); return null } // common practice
    return v || null
  }
  const maker = text('maker', 120, 'maker')
  const reference = text('reference', 60, 'reference')
  const material = text('material', 80, 'material') ?? ''

  const di = { gtin, hibcc_di: hibcc }
  if (errors.length || !kind) return { item: null, errors, di }
  return {
    di,
    item: {
      row: n, kind, description, maker, reference, gtin, hibcc_di: hibcc,
      diameter_mm: diameter, length_mm: length, angle_deg: angle, side, nail_type: nailType,
      material, unit_cost: unitCost, implant_card: implantCard,
    },
    errors: [],
  }
}

/** Stateful row checker for streaming: duplicate DIs are reported naming both rows. */
export interface CatalogValidator {
  /** Check the next row; `rowNumber` defaults to one more than the last row seen. */
  push(row: Record<string, unknown>, rowNumber?: number): CatalogRowResult
  /** Rows checked so far, and how many passed. */
  readonly counts: { rows: number; items: number; errors: number }
}

export function createCatalogValidator(mapping: CatalogMapping): CatalogValidator {
  const seen = new Map<string, number>() // "gtin:…" / "hibcc:…" → first row
  const counts = { rows: 0, items: 0, errors: 0 }
  let last = 0
  const headerFor = (f: CatalogField) => Object.entries(mapping ?? {}).find(([, x]) => x === f)?.[0] ?? f
  return {
    counts,
    push(row, rowNumber) {
      const n = rowNumber ?? last + 1
      last = n
      counts.rows++
      const r = validateCatalogRow(row, mapping, n)
      const dup: CsvProblem[] = []
      const keys: [string, 'gtin' | 'hibcc_di', string][] = []
      if (r.di.gtin) keys.push([`gtin:${r.di.gtin}`, 'gtin', r.di.gtin])
      if (r.di.hibcc_di) keys.push([`hibcc:${r.di.hibcc_di}`, 'hibcc_di', r.di.hibcc_di])
      for (const [k, field, v] of keys) {
        const first = seen.get(k)
        // The DI is the upsert key (catalog_items.gtin / hibcc_di are UNIQUE): two rows would overwrite each other.
        if (first !== undefined) {
          const label = field === 'gtin' ? 'GTIN' : 'HIBCC DI'
          dup.push({ row: n, column: headerFor(field), message: `Row ${n}: ${label} ${v} is also on row ${first}. Each item may appear once; delete or correct one of the two rows.` })
        } else seen.set(k, n)
      }
      const errors = [...r.errors, ...dup]
      counts.errors += errors.length
      if (errors.length) return { item: null, errors, di: r.di }
      counts.items++
      return r
    },
  }
}

/** All rows at once: the mapping is checked first (nothing else is reported while it is broken). */
export function validateCatalogRows(rows: Record<string, unknown>[], mapping: CatalogMapping): { items: CatalogItemInput[]; errors: CsvProblem[] } {
  const mp = mappingProblems(mapping)
  if (mp.length) return { items: [], errors: mp }
  if (!Array.isArray(rows) || rows.length === 0) return { items: [], errors: [{ row: 0, message: 'The file has no item rows. Add one line per catalog item under the header.' }] }
  const v = createCatalogValidator(mapping)
  const items: CatalogItemInput[] = []
  const errors: CsvProblem[] = []
  rows.forEach((row, i) => {
    const r = v.push(row, i + 1)
    if (r.item) items.push(r.item)
    errors.push(...r.errors)
  })
  return { items, errors }
}
