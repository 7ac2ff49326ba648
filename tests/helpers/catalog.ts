// A small shelf of invented implants for one test facility: GTINs on the demo prefix 952, random so
// that test files never collide on the catalog's unique GTIN.
import type { Kysely } from 'kysely'
import { gtinCheckDigit } from '../../shared/utils/udi'
import type { Database, ItemKind } from '../../db/types'
import { testDb, type TestFacility } from './db'

export function gtinCheck(body13: string): string {
  return String(gtinCheckDigit(body13))
}

/**
 * n GTIN-14s in a row on the demo prefix 952, with their GS1 mod-10 check digit (GS1 General
 * Specifications §7.9). The indicator digit (the packaging level, §3.3.2) keeps bulk series apart from the
 * unit-level 0952… GTINs other tests draw at random; the clock's last digits keep runs apart.
 */
export function gtinSeries(n: number, indicator: 0 | 1 | 2 = 0): string[] {
  const width = Math.max(4, String(n - 1).length)
  const base = `${indicator}952${String(Date.now()).slice(-(9 - width))}`
  return Array.from({ length: n }, (_, i) => { const body = base + String(i).padStart(width, '0'); return body + gtinCheck(body) })
}

export function randomGtin(): string {
  let body = '0952'
  for (let i = 0; i < 9; i++) body += Math.floor(Math.random() * 10)
  return body + gtinCheck(body)
}

export interface ShelfSpec {
  kind: ItemKind
  d?: number | null
  len?: number | null
  angle?: number | null
  side?: 'left' | 'right' | null
  type?: 'short' | 'long' | null
  onHand?: number
  lot?: string
  expiry?: string | null
  implantCard?: boolean
}

export interface ShelfRow { id: number; gtin: string; spec: ShelfSpec; stockLineId: number }

export async function addItems(f: TestFacility, specs: ShelfSpec[], db: Kysely<Database> = testDb()): Promise<ShelfRow[]> {
  const out: ShelfRow[] = []
  for (const s of specs) {
    const gtin = randomGtin()
    const desc = s.kind === 'nail'
      ? `Test nail ${s.type} ${s.side ?? 'unsided'} ${s.d}×${s.len} ${s.angle}°`
      : `Test ${s.kind} ${s.d ?? ''}×${s.len ?? ''}`
    const item = await db.insertInto('catalog_items').values({
      kind: s.kind, description: desc, gtin, diameter_mm: s.d ?? null, length_mm: s.len ?? null, angle_deg: s.angle ?? null,
      side: s.side ?? null, nail_type: s.type ?? null, implant_card: s.implantCard ?? s.kind === 'nail', unit_cost: 100,
    }).returning('id').executeTakeFirstOrThrow()
    const line = await db.insertInto('stock_lines').values({
      location_id: f.locationId, item_id: item.id, lot: s.lot ?? `L${item.id}`, expiry: s.expiry === undefined ? '2030-12-31' : s.expiry,
      on_hand: s.onHand ?? 3,
    }).returning('id').executeTakeFirstOrThrow()
    out.push({ id: item.id, gtin, spec: s, stockLineId: line.id })
  }
  return out
}

/** Long left/right nails 10–12 mm × 340–400 mm at 125/130°, head elements 80–110 mm, distal screws 30–50 mm. */
export async function standardShelf(f: TestFacility, db: Kysely<Database> = testDb()) {
  const specs: ShelfSpec[] = []
  for (const side of ['left', 'right'] as const)
    for (const angle of [125, 130])
      for (const d of [10, 11, 12])
        for (const len of [340, 360, 380, 400]) specs.push({ kind: 'nail', d, len, angle, side, type: 'long' })
  for (const d of [10, 11, 12]) for (const len of [180, 200]) specs.push({ kind: 'nail', d, len, angle: 130, side: null, type: 'short' })
  for (let len = 80; len <= 110; len += 5) specs.push({ kind: 'head_element', d: 10.5, len })
  for (let len = 30; len <= 50; len += 2) specs.push({ kind: 'distal_screw', d: 5, len })
  specs.push({ kind: 'set_screw', onHand: 10 })
  const rows = await addItems(f, specs, db)
  const find = (pred: (s: ShelfSpec) => boolean) => rows.find((r) => pred(r.spec))!
  return { rows, find }
}
