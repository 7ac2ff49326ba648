import { describe, expect, it } from 'vitest'
import { decideScan, describeSize, type ScanFacts } from '../../../../shared/utils/scan-checks'

const nail = { kind: 'nail', description: 'nail', diameterMm: 11, lengthMm: 380, angleDeg: 130, side: 'left' as const }
const base: ScanFacts = {
  unit: { di: '09521234500001', lot: 'L1', serial: 'S1', expiry: '2030-12-31' },
  item: nail, surgeryDay: '2026-12-01', caseSide: 'left', disposition: 'implanted', confirmed: [nail],
  recalls: [], quarantined: false, notOnShelf: false,
}

describe('decideScan', () => {
  // the implant's instructions for use: never implant expired product; a use-by date holds through its day
  it('refuses a pack that expired before the day of surgery, and accepts one that expires that day', () => {
    expect(decideScan({ ...base, unit: { ...base.unit, expiry: '2026-11-30' } }).refusal).toMatchObject({ code: 'expired', message: 'Expired 2026-11-30 — do not open. Fetch another pack.' })
    expect(decideScan({ ...base, unit: { ...base.unit, expiry: '2026-12-01' } }).result).not.toBe('refused')
  })
  it('refuses recalled and quarantined packs, expiry first', () => {
    expect(decideScan({ ...base, recalls: [{ title: 'R', noticeRef: 'N' }] }).refusal!.code).toBe('recalled')
    expect(decideScan({ ...base, quarantined: true }).refusal!.code).toBe('quarantined')
    expect(decideScan({ ...base, quarantined: true, unit: { ...base.unit, expiry: '2020-01-01' } }).refusal!.code).toBe('expired')
  })
  it('documents explanted hardware whatever its expiry or recall', () => {
    expect(decideScan({ ...base, disposition: 'explanted', unit: { ...base.unit, expiry: '2001-01-01' }, recalls: [{ title: 'R', noticeRef: '' }] }).result).not.toBe('refused')
  })
  it('a nail of the confirmed size asks only for the aiming guide (technique guides: from memory)', () => {
    const d = decideScan(base)
    expect(d.result).toBe('check')
    expect(d.checks.map((c) => c.code)).toEqual(['aiming_guide'])
  })
  it('flags size and side differences for acknowledgement (The Joint Commission UP.01.01.01)', () => {
    const d = decideScan({ ...base, item: { ...nail, side: 'right', lengthMm: 400 } })
    expect(d.checks.filter((c) => c.needsAck).map((c) => c.code)).toEqual(['wrong_side', 'size_differs', 'aiming_guide'])
    expect(d.checks[1]!.message).toBe('Size 11 × 400 mm, 130°, right differs from the confirmed 11 × 380 mm, 130°, left. Check with the surgeon.')
  })
  it('a distal screw may match any of the confirmed screws', () => {
    const s = (len: number) => ({ kind: 'distal_screw', description: '', diameterMm: 5, lengthMm: len, angleDeg: null, side: null })
    expect(decideScan({ ...base, item: s(40), confirmed: [s(36), s(40)] }).result).toBe('accepted')
    expect(decideScan({ ...base, item: s(42), confirmed: [s(36), s(40)] }).checks[0]!.message).toMatch(/confirmed 36 mm or 40 mm/)
  })
  it('holds an unknown device identifier as unmatched; a wasted pack skips size checks', () => {
    expect(decideScan({ ...base, item: null })).toMatchObject({ result: 'check', checks: [{ code: 'unmatched' }] })
    expect(decideScan({ ...base, disposition: 'wasted', item: { ...nail, lengthMm: 400 } }).result).toBe('accepted')
  })
  it('describes sizes with their units', () => {
    expect(describeSize(nail)).toBe('11 × 380 mm, 130°, left')
    expect(describeSize({ ...nail, kind: 'head_element', lengthMm: 95 })).toBe('95 mm')
  })
})
