// The invented implant system of the demo scenario. GTINs are on GS1 prefix 952, which GS1 reserves for
// demonstrations and examples (GS1 prefix list, see standards.md A1.8). Sizes follow trade.md §1.3/§1.7/§1.8.
import { gtinCheckDigit } from '../shared/utils/udi'
import type { ItemKind } from './types'

export interface DemoItem {
  kind: ItemKind
  description: string
  reference: string
  gtin: string
  diameter_mm: number | null
  length_mm: number | null
  angle_deg: number | null
  side: 'left' | 'right' | null
  nail_type: 'short' | 'long' | null
  material: string
  unit_cost: number
  implant_card: boolean
}

function gtin14(body13: string): string {
  return body13 + String(gtinCheckDigit(body13))
}

export const DEMO_MAKER = {
  name: 'Fernhollow Medical (demo)',
  address: '1 Example Quay, Demo Town, DM1 0AA',
  website: 'https://fernhollow.example',
}

export function demoCatalog(): DemoItem[] {
  const items: DemoItem[] = []
  let ref = 1
  const next = (kind: string) => {
    const n = ref++
    return { reference: `FH-${kind}-${String(n).padStart(4, '0')}`, gtin: gtin14(`095212345${String(n).padStart(4, '0')}`) }
  }
  for (const angle of [125, 130, 135]) {
    for (const d of [10, 11, 12, 13]) {
      for (const len of [180, 200]) {
        items.push({
          kind: 'nail', description: `Trochanteric nail, short, ${d} mm × ${len} mm, ${angle}°`, ...next('NS'),
          diameter_mm: d, length_mm: len, angle_deg: angle, side: null, nail_type: 'short',
          material: 'Titanium alloy', unit_cost: 780, implant_card: true,
        })
      }
    }
  }
  for (const side of ['left', 'right'] as const) {
    for (const angle of [125, 130]) {
      for (const d of [9, 10, 11, 12, 13]) {
        for (let len = 300; len <= 460; len += 20) {
          items.push({
            kind: 'nail', description: `Trochanteric nail, long, ${side}, ${d} mm × ${len} mm, ${angle}°`, ...next('NL'),
            diameter_mm: d, length_mm: len, angle_deg: angle, side, nail_type: 'long',
            material: 'Titanium alloy', unit_cost: 1180, implant_card: true,
          })
        }
      }
    }
  }
  for (let len = 70; len <= 120; len += 5) {
    items.push({
      kind: 'head_element', description: `Head element (lag screw) 10.5 mm × ${len} mm`, ...next('HE'),
      diameter_mm: 10.5, length_mm: len, angle_deg: null, side: null, nail_type: null,
      material: 'Titanium alloy', unit_cost: 310, implant_card: false,
    })
  }
  for (let len = 26; len <= 60; len += 2) {
    items.push({
      kind: 'distal_screw', description: `Distal locking screw 5.0 mm × ${len} mm`, ...next('DS'),
      diameter_mm: 5, length_mm: len, angle_deg: null, side: null, nail_type: null,
      material: 'Titanium alloy', unit_cost: 95, implant_card: false,
    })
  }
  items.push({
    kind: 'set_screw', description: 'Set screw for head element', ...next('SS'),
    diameter_mm: null, length_mm: null, angle_deg: null, side: null, nail_type: null,
    material: 'Titanium alloy', unit_cost: 60, implant_card: false,
  })
  for (const ext of [0, 5, 10]) {
    items.push({
      kind: 'end_cap', description: `End cap, extension ${ext} mm`, ...next('EC'),
      diameter_mm: null, length_mm: ext, angle_deg: null, side: null, nail_type: null,
      material: 'Titanium alloy', unit_cost: 70, implant_card: false,
    })
  }
  return items
}

/** Deterministic on-hand counts with a few deliberate gaps, so the shelf and sizing show real choices. */
export function demoOnHand(item: DemoItem, index: number): number {
  if (item.kind === 'nail') {
    if (item.nail_type === 'long' && (item.length_mm === 460 || item.diameter_mm === 13)) return index % 3 === 0 ? 1 : 0
    if (item.diameter_mm === 10 && item.length_mm === 380 && item.angle_deg === 130 && item.side === 'left') return 0
    return 1 + (index % 3)
  }
  if (item.kind === 'head_element') return item.length_mm === 95 ? 0 : 3 + (index % 3)
  if (item.kind === 'distal_screw') return item.length_mm === 40 ? 0 : 4 + (index % 4)
  return 10
}
