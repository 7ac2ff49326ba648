import { READING_SPEC, type ReadingKind } from '#shared/schemas/cases'

export type StepComponent = 'nail' | 'head_element' | 'distal_screw' | 'tad'
export interface ReadingStep { id: string; kind: ReadingKind; slot: number; label: string; component: StepComponent; group: string; optional?: boolean }

/** Readings in the order the operation produces them: canal → nail length → angle → head element → distal screws → TAD. */
export function readingSteps(distalSlots: number[]): ReadingStep[] {
  const s = (kind: ReadingKind, component: StepComponent, group: string, slot = 0, optional = false, label: string = READING_SPEC[kind].label): ReadingStep =>
    ({ id: `${kind}:${slot}`, kind, slot, label, component, group, optional })
  const slots = [...new Set([1, ...distalSlots])].sort((a, b) => a - b)
  return [
    s('reamed_diameter', 'nail', 'Nail'),
    s('nail_length', 'nail', 'Nail'),
    s('native_angle', 'nail', 'Nail'),
    s('head_element_length', 'head_element', 'Head element'),
    s('head_compression', 'head_element', 'Head element', 0, true),
    ...slots.map((n) => s('distal_depth', 'distal_screw', 'Distal screws', n, n > 1, `Distal screw ${n} depth`)),
    s('tad_ap_tip_apex', 'tad', 'Tip-apex distance (optional)', 0, true),
    s('tad_ap_screw_diameter', 'tad', 'Tip-apex distance (optional)', 0, true),
    s('tad_lat_tip_apex', 'tad', 'Tip-apex distance (optional)', 0, true),
    s('tad_lat_screw_diameter', 'tad', 'Tip-apex distance (optional)', 0, true),
    s('tad_true_screw_diameter', 'tad', 'Tip-apex distance (optional)', 0, true),
  ]
}

export function unitSign(unit: 'mm' | 'deg'): string {
  return unit === 'deg' ? '°' : ' mm'
}

/** A number with its unit, never without (DESIGN.md). */
export function withUnit(v: number | string | null | undefined, unit: 'mm' | 'deg'): string {
  if (v === null || v === undefined || v === '') return '—'
  return `${v}${unitSign(unit)}`
}
