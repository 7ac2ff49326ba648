import { describe, it, expect } from 'vitest'
import fc from 'fast-check'
import Decimal from 'decimal.js'
import {
  chooseDistalScrew,
  chooseHeadElement,
  chooseNail,
  tipApexDistance,
  type StockLine,
} from '../../../../shared/utils/sizing'

// Random invented stocks: the limits must hold for any catalogue, not just one demo list.
// Sizes are generated on 0.5 mm / 1° / 0.1 mm grids (as catalogues and readings are), then
// compared with Decimal so the checks are independent of float rounding.

const RUNS = { numRuns: 300 }
const half = (lo: number, hi: number) => fc.integer({ min: lo * 2, max: hi * 2 }).map((n) => n / 2)
const tenth = (lo: number, hi: number) => fc.integer({ min: lo * 10, max: hi * 10 }).map((n) => n / 10)

const nailLine = fc.record({
  diameterMm: half(8, 16),
  lengthMm: fc.integer({ min: 8, max: 24 }).map((n) => n * 20), // 160–480
  angleDeg: fc.constantFrom(120, 125, 130, 135),
  side: fc.constantFrom<'left' | 'right' | null>('left', 'right', null),
  nailType: fc.constantFrom<'short' | 'long'>('short', 'long'),
  onHand: fc.integer({ min: 0, max: 3 }),
})

const nailStock = fc
  .array(nailLine, { minLength: 0, maxLength: 40 })
  .map((lines) => lines.map((l, i): StockLine => ({ id: `n${String(i).padStart(3, '0')}`, kind: 'nail', ...l })))

const lengthStock = (kind: 'head_element' | 'distal_screw', lo: number, hi: number) =>
  fc
    .array(fc.record({ lengthMm: fc.integer({ min: lo, max: hi }), onHand: fc.integer({ min: 0, max: 3 }) }), { maxLength: 25 })
    .map((lines) => lines.map((l, i): StockLine => ({ id: `${kind}-${i}`, kind, diameterMm: 5, ...l })))

const clearance = fc.constantFrom(0.5, 0.75, 1.0, 1.25, 1.5)

describe('sizing properties', () => {
  it('chosen nail (and every alternative) is ≤ reamed − clearance, ≤ the length reading, right side and type', () => {
    // AO Surgery Reference (reaming) + common practice (clearance, length at or below the reading); Schmutz 2016 (side)
    fc.assert(
      fc.property(
        nailStock,
        half(8, 18),
        tenth(150, 500),
        fc.integer({ min: 115, max: 140 }),
        fc.constantFrom<'left' | 'right'>('left', 'right'),
        fc.constantFrom<'short' | 'long' | undefined>('short', 'long', undefined),
        clearance,
        (stock, reamed, reading, native, side, nailType, c) => {
          const r = chooseNail({ reamedDiameterMm: reamed, lengthMm: reading, nativeAngleDeg: native, side, nailType }, stock, {
            nailClearanceMm: c,
          })
          const maxD = new Decimal(reamed).minus(c)
          const picked = [r.ideal, r.choice, ...r.alternatives].filter((l): l is StockLine => l !== null)
          for (const l of picked) {
            expect(new Decimal(l.diameterMm).lte(maxD)).toBe(true)
            expect(new Decimal(l.lengthMm).lte(reading)).toBe(true)
            expect(l.kind).toBe('nail')
            expect(l.side == null || l.side === side).toBe(true)
            if (nailType) expect(l.nailType).toBe(nailType)
          }
          // If any line fits both hard limits, an ideal must be found (no needless "no nail").
          const anyFits = stock.some(
            (l) =>
              (l.side == null || l.side === side) &&
              (!nailType || l.nailType === nailType) &&
              new Decimal(l.diameterMm).lte(maxD) &&
              new Decimal(l.lengthMm).lte(reading),
          )
          expect(r.ideal !== null).toBe(anyFits)
          // Parry 2018: the warning appears exactly when the ideal is below native...
          if (r.ideal) {
            expect(r.warnings.some((w) => w.code === 'angle_below_native')).toBe((r.ideal.angleDeg as number) < native)
          }
          // ...and, for a requested type, only when no fitting nail of that type is at or above native.
          if (r.ideal && nailType) {
            const fitsAtOrAbove = stock.some(
              (l) =>
                (l.side == null || l.side === side) &&
                l.nailType === nailType &&
                new Decimal(l.diameterMm).lte(maxD) &&
                new Decimal(l.lengthMm).lte(reading) &&
                (l.angleDeg as number) >= native,
            )
            expect((r.ideal.angleDeg as number) >= native).toBe(fitsAtOrAbove)
          }
        },
      ),
      RUNS,
    )
  })

  it('head element never exceeds reading − compression', () => {
    // Wheeless' Textbook of Orthopaedics, "Hip Frx: Screw Length"; never round up: common practice
    fc.assert(
      fc.property(lengthStock('head_element', 60, 130), tenth(60, 130), tenth(0, 10), (stock, reading, comp) => {
        const r = chooseHeadElement({ readingMm: reading, compressionMm: comp }, stock)
        const limit = new Decimal(reading).minus(comp)
        for (const l of [r.ideal, ...r.alternatives].filter((x): x is StockLine => x !== null)) {
          expect(new Decimal(l.lengthMm).lte(limit)).toBe(true)
        }
        // The ideal is the longest that fits: nothing fitting is longer.
        if (r.ideal) {
          for (const l of stock) if (new Decimal(l.lengthMm).lte(limit)) expect(l.lengthMm).toBeLessThanOrEqual(r.ideal.lengthMm)
        } else {
          expect(stock.every((l) => new Decimal(l.lengthMm).gt(limit))).toBe(true)
        }
      }),
      RUNS,
    )
  })

  it('alternatives are always on hand, at most 3, never the ideal, and empty without an ideal', () => {
    // The Joint Commission UP.01.01.01 (implants present before the procedure)
    fc.assert(
      fc.property(
        nailStock,
        lengthStock('head_element', 60, 130),
        lengthStock('distal_screw', 20, 64),
        half(8, 18),
        tenth(150, 500),
        tenth(60, 130),
        tenth(20, 64),
        fc.constantFrom<'up' | 'down'>('up', 'down'),
        (nails, heads, screws, reamed, length, reading, depth, rounding) => {
          const stock = [...nails, ...heads, ...screws]
          const results = [
            chooseNail({ reamedDiameterMm: reamed, lengthMm: length, nativeAngleDeg: 130, side: 'right' }, stock),
            chooseHeadElement({ readingMm: reading }, stock),
            chooseDistalScrew({ depthMm: depth }, stock, { distalScrewRounding: rounding }),
          ]
          for (const r of results) {
            expect(r.alternatives.length).toBeLessThanOrEqual(3)
            if (!r.ideal) expect(r.alternatives).toEqual([])
            for (const a of r.alternatives) {
              expect(a.onHand).toBeGreaterThan(0)
              expect(a.id).not.toBe(r.ideal?.id)
            }
            // choice is the ideal exactly when it is on hand
            if (r.ideal && r.ideal.onHand > 0) expect(r.choice).toBe(r.ideal)
            else expect(r.choice).toBeNull()
            expect(r.warnings.some((w) => w.code === 'out_of_stock')).toBe(!!r.ideal && r.ideal.onHand === 0)
          }
        },
      ),
      RUNS,
    )
  })

  it("distal screw 'up' is ≥ depth and the shortest such; 'down' is ≤ depth and the longest such", () => {
    // AO Surgery Reference (tip passes the far cortex; over-wire readings rounded down)
    fc.assert(
      fc.property(lengthStock('distal_screw', 20, 64), tenth(20, 64), (stock, depth) => {
        const up = chooseDistalScrew({ depthMm: depth }, stock)
        const longer = stock.filter((l) => new Decimal(l.lengthMm).gte(depth)).map((l) => l.lengthMm)
        expect(up.ideal ? up.ideal.lengthMm : null).toBe(longer.length ? Math.min(...longer) : null)
        for (const l of [up.ideal, ...up.alternatives].filter((x): x is StockLine => x !== null)) {
          expect(new Decimal(l.lengthMm).gte(depth)).toBe(true)
        }
        const down = chooseDistalScrew({ depthMm: depth }, stock, { distalScrewRounding: 'down' })
        const shorter = stock.filter((l) => new Decimal(l.lengthMm).lte(depth)).map((l) => l.lengthMm)
        expect(down.ideal ? down.ideal.lengthMm : null).toBe(shorter.length ? Math.max(...shorter) : null)
      }),
      RUNS,
    )
  })

  it('result does not depend on the order of the stock list', () => {
    // determinism: ties broken by id
    fc.assert(
      fc.property(nailStock, half(8, 18), tenth(150, 500), (stock, reamed, length) => {
        const q = { reamedDiameterMm: reamed, lengthMm: length, nativeAngleDeg: 128, side: 'left' as const }
        expect(chooseNail(q, [...stock].reverse())).toEqual(chooseNail(q, stock))
      }),
      RUNS,
    )
  })

  it('TAD matches the formula to 0.01 mm and flags only above the limit', () => {
    // Baumgaertner MR et al., JBJS Am 1995;77(7):1058–64
    fc.assert(
      fc.property(tenth(1, 40), tenth(8, 16), tenth(1, 40), tenth(8, 16), tenth(8, 14), (xap, dap, xlat, dlat, dtrue) => {
        const r = tipApexDistance({ apTipApexMm: xap, apScrewDiameterMm: dap, latTipApexMm: xlat, latScrewDiameterMm: dlat, trueScrewDiameterMm: dtrue })
        const approx = (xap * dtrue) / dap + (xlat * dtrue) / dlat
        expect(Math.abs(r.tadMm - approx)).toBeLessThanOrEqual(0.005 + 1e-9)
        expect(r.overLimit).toBe(r.tadMm > 25)
      }),
      RUNS,
    )
  })
})
