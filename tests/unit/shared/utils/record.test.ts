/**
 * The canonical case record: determinism, hashing, corrections, implant/waste split, what blocks
 * closing, and facility-time formatting.
 *
 * Sources are named beside the checks. "standards.md" is the project's standards fact sheet,
 * "trade.md" the trade-practice fact sheet (shared/reference/). All data is invented.
 */
import { createHash } from 'node:crypto'
import { describe, expect, it } from 'vitest'
import {
  RECORD_CAUTION,
  RECORD_SCHEMA,
  buildRecord,
  canonicalJson,
  closeProblems,
  recordHash,
  recordTime,
  sha256Hex,
  udiSymbol,
  type CaseSnapshot,
} from '../../../../shared/utils/record'

// ---------------------------------------------------------------------------------------------
// An invented case (demo facility, demo maker, GS1 demo prefix 952: standards.md A1.8)
// ---------------------------------------------------------------------------------------------

const META1 = { version: 1, previousVersionHash: null, addendumReason: null }
const MAKER = { name: 'Fernhollow Medical (demo)', address: '1 Example Quay, Demo Town, DM1 0AA', website: 'https://fernhollow.example' }

type Item = CaseSnapshot['items'][number]
function item(id: number, over: Partial<Item> = {}): Item {
  return {
    id, description: 'Distal locking screw 5.0 mm × 40 mm', kind: 'distal_screw', maker: MAKER, issuer: 'GS1',
    di: '09521234500018', lot: `FH26${id}`, serial: null, expiry: '2031-01-31', manufactured: null,
    hri: `(01)09521234500018(17)310131(10)FH26${id}`, source: 'camera', disposition: 'implanted',
    wasteReason: null, wasteNote: null, recordedBy: 'Tomás Ferreira', recordedAt: '2026-11-30T14:10:00Z',
    checks: [], implantCard: false, ...over,
  }
}

function snapshot(): CaseSnapshot {
  return {
    facility: { name: 'Ferncliff General Hospital (demo)', timeZone: 'America/New_York' },
    case: { id: 77, procedure: 'short_nail', side: 'left', theatre: 'OR 2',
      scheduledAt: '2026-11-30T13:00:00Z', openedAt: '2026-11-30T13:10:00Z', closedAt: null },
    patient: { mrn: 'FGH-0001234', familyName: 'Groß', givenName: 'Joaquim', birthDate: '1938-05-02', sex: 'male' },
    team: { surgeon: { id: 1, name: 'Ilse Brønnum' }, circulator: { id: 2, name: 'Tomás Ferreira' }, scrub: null },
    ruleProfile: { version: 2, nailClearanceMm: 1, distalScrewRounding: 'up', tadLimitMm: 25 },
    readings: [
      { id: 10, kind: 'reamed_diameter', slot: 0, value: '12.50', unit: 'mm', enteredBy: 'Tomás Ferreira', enteredAt: '2026-11-30T13:30:00Z', supersedesId: null },
      { id: 14, kind: 'reamed_diameter', slot: 0, value: '12.00', unit: 'mm', enteredBy: 'Ilse Brønnum', enteredAt: '2026-11-30T13:33:00Z', supersedesId: 10 },
      { id: 11, kind: 'native_angle', slot: 0, value: '131.00', unit: 'deg', enteredBy: 'Ilse Brønnum', enteredAt: '2026-11-30T13:20:00Z', supersedesId: null },
      { id: 12, kind: 'distal_depth', slot: 1, value: '39.00', unit: 'mm', enteredBy: 'Tomás Ferreira', enteredAt: '2026-11-30T14:05:00Z', supersedesId: null },
      { id: 13, kind: 'nail_length', slot: 0, value: '200.00', unit: 'mm', enteredBy: 'Tomás Ferreira', enteredAt: '2026-11-30T13:35:00Z', supersedesId: null },
    ],
    decisions: [
      { component: 'nail', slot: 0, proposed: { itemId: 5, description: 'Trochanteric nail, short, 11 mm × 200 mm, 130°' },
        chosen: { itemId: 5, description: 'Trochanteric nail, short, 11 mm × 200 mm, 130°' }, reason: null,
        reasons: ['Length 200 mm: stocked length at or below the reading.', 'Diameter 11 mm: last reamer 12.0 mm minus 1.0 mm.'],
        warnings: [{ code: 'angle_below_native', message: 'The nail angle 130° is below the native angle 131°.', source: 'Parry JA et al., J Orthop Trauma 2018;32:174–7',
          acknowledgedBy: 'Ilse Brønnum', acknowledgedAt: '2026-11-30T13:40:00Z' }],
        guideAcknowledged: true, decidedBy: 'Ilse Brønnum', decidedAt: '2026-11-30T13:39:00Z' },
      { component: 'distal_screw', slot: 1, proposed: { itemId: 7, description: 'Distal locking screw 5.0 mm × 40 mm' },
        chosen: { itemId: 7, description: 'Distal locking screw 5.0 mm × 40 mm' }, reason: null, reasons: ['Shortest stocked screw at or above 39 mm.'],
        warnings: [], guideAcknowledged: false, decidedBy: 'Ilse Brønnum', decidedAt: '2026-11-30T14:06:00Z' },
    ],
    tad: { tadMm: 21.4, overLimit: false, limitMm: 25 },
    items: [
      item(201, { kind: 'nail', description: 'Trochanteric nail, short, 11 mm × 200 mm, 130°', serial: 'NS0000201', implantCard: true,
        hri: '(01)09521234500018(17)310131(10)FH26201(21)NS0000201', recordedAt: '2026-11-30T13:45:00Z' }),
      item(203, { recordedAt: '2026-11-30T14:10:00Z' }),
      item(202, { recordedAt: '2026-11-30T14:10:00Z', disposition: 'wasted', wasteReason: 'dropped',
        checks: [{ code: 'size_differs', message: 'Size differs from the confirmed size (40 mm).', acknowledgedBy: 'Tomás Ferreira', acknowledgedAt: '2026-11-30T14:09:00Z' }] }),
      item(204, { recordedAt: '2026-11-30T14:20:00Z', kind: 'end_cap', description: 'End cap, extension 0 mm' }),
    ],
    warnings: [{ code: 'explant_recorded', message: 'A screw from an earlier operation was removed.', acknowledgedBy: 'Ilse Brønnum', acknowledgedAt: '2026-11-30T13:15:00Z' }],
  }
}

/** A reordering that moves something in every list of two or more: reverse, then (from three) rotate by one. */
function scramble<T>(a: T[]): T[] {
  const r = [...a].reverse()
  if (r.length > 2) r.push(r.shift()!)
  return r
}

function shuffled(s: CaseSnapshot): CaseSnapshot {
  return {
    ...s,
    readings: scramble(s.readings),
    decisions: scramble(s.decisions.map((d) => ({ ...d, reasons: scramble(d.reasons), warnings: scramble(d.warnings) }))),
    items: scramble(s.items.map((i) => ({ ...i, checks: scramble(i.checks) }))),
    warnings: scramble(s.warnings),
  }
}

// ---------------------------------------------------------------------------------------------
// Hashing and canonical JSON
// ---------------------------------------------------------------------------------------------

describe('sha256Hex', () => {
  it('matches the published SHA-256 test vectors', async () => {
    // FIPS 180-2 (NIST, 2002), Appendix B.1: SHA-256("abc")
    expect(await sha256Hex('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad')
    // FIPS 180-2, Appendix B.2: the 448-bit two-block message
    expect(await sha256Hex('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq'))
      .toBe('248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1')
  })

  it('hashes the UTF-8 bytes of non-ASCII text (checked against node:crypto)', async () => {
    const text = 'Åkesson-Dubois, Margit · Groß · Ø · é'
    // An independent implementation (OpenSSL through node:crypto) over the UTF-8 encoding.
    expect(await sha256Hex(text)).toBe(createHash('sha256').update(Buffer.from(text, 'utf8')).digest('hex'))
  })
})

describe('canonicalJson', () => {
  it('sorts object keys at every depth, keeps array order, and writes no whitespace', () => {
    const v = { b: 1, a: { d: [3, { z: 1, y: 2 }, 1], c: 'x y' }, ä: true, A: null }
    expect(canonicalJson(v)).toBe('{"A":null,"a":{"c":"x y","d":[3,{"y":2,"z":1},1]},"b":1,"ä":true}')
  })

  it('gives the same text for the same data written in a different key order', () => {
    expect(canonicalJson({ x: 1, y: { p: 1, q: [1, 2] } })).toBe(canonicalJson({ y: { q: [1, 2], p: 1 }, x: 1 }))
    expect(canonicalJson([1, 2])).not.toBe(canonicalJson([2, 1]))
  })

  it('follows JSON for edge values (ECMA-404 / JSON.stringify rules)', () => {
    expect(canonicalJson({ a: undefined, b: [undefined], c: Number.NaN, d: 'quote " and \n' })).toBe('{"b":[null],"c":null,"d":"quote \\" and \\n"}')
    // Round-trips to the same value
    const v = { k: [1, 'é', { n: -0.5 }] }
    expect(JSON.parse(canonicalJson(v))).toEqual(v)
  })
})

// ---------------------------------------------------------------------------------------------
// buildRecord
// ---------------------------------------------------------------------------------------------

describe('buildRecord', () => {
  it('carries the schema, version chain fields and the standing caution', () => {
    const r = buildRecord(snapshot(), META1)
    expect(r.schema).toBe(RECORD_SCHEMA)
    expect(r.schema).toBe('isthmus.record/1')
    expect(r.version).toBe(1)
    expect(r.previousVersionHash).toBeNull()
    expect(r.addendumReason).toBeNull()
    // trade.md §3.1 (decision support only)
    expect(r.caution).toBe('Decision support only. The surgeon decides. Follow the implant\'s instructions for use and local policy.')
    expect(RECORD_CAUTION).toBe(r.caution)
    expect(r.patient.name).toBe('Groß, Joaquim')
    expect(r.procedure.code).toBe('short_nail')
    expect(r.side).toBe('left')
    expect(r.theatre).toBe('OR 2')
    expect(r.team.scrub).toBeNull()
    expect(r.sizing.ruleProfile?.version).toBe(2)
    expect(r.tipApex).toEqual({ tadMm: 21.4, limitMm: 25, overLimit: false })
  })

  it('is a plain JSON value (survives a JSON round trip unchanged)', () => {
    const r = buildRecord(snapshot(), META1)
    expect(JSON.parse(JSON.stringify(r))).toEqual(r)
  })

  it('gives the same hash for the same snapshot, and for the same rows in any order', async () => {
    const a = buildRecord(snapshot(), META1)
    const b = buildRecord(snapshot(), META1)
    const c = buildRecord(shuffled(snapshot()), META1)
    // the shuffle really moved rows, nested lists included
    expect(shuffled(snapshot()).items.map((i) => i.id)).not.toEqual(snapshot().items.map((i) => i.id))
    expect(shuffled(snapshot()).readings.map((x) => x.id)).not.toEqual(snapshot().readings.map((x) => x.id))
    expect(shuffled(snapshot()).decisions.find((x) => x.component === 'nail')!.reasons).not.toEqual(snapshot().decisions[0]!.reasons)
    expect(c).toEqual(a)
    expect(await recordHash(b)).toBe(await recordHash(a))
    expect(await recordHash(c)).toBe(await recordHash(a))
    expect(await recordHash(a)).toMatch(/^[0-9a-f]{64}$/)
  })

  it('changes the hash when a reading value, an acknowledgement or the version changes', async () => {
    const base = await recordHash(buildRecord(snapshot(), META1))
    const s1 = snapshot()
    s1.readings[3]!.value = '38.00'
    expect(await recordHash(buildRecord(s1, META1))).not.toBe(base)
    const s2 = snapshot()
    s2.decisions[0]!.warnings[0]!.acknowledgedBy = 'Tomás Ferreira'
    expect(await recordHash(buildRecord(s2, META1))).not.toBe(base)
    const v2 = { version: 2, previousVersionHash: base, addendumReason: 'Lot of the end cap corrected from the pack.' }
    expect(await recordHash(buildRecord(snapshot(), v2))).not.toBe(base)
  })

  it('shows the current reading value and each superseded value as a correction with who/when', () => {
    const r = buildRecord(snapshot(), META1)
    const reamer = r.readings.find((x) => x.kind === 'reamed_diameter')!
    expect(reamer.current.value).toBe('12.00')
    expect(reamer.current.display).toBe('12 mm')
    expect(reamer.current.enteredBy).toBe('Ilse Brønnum')
    expect(reamer.corrections).toHaveLength(1)
    const old = reamer.corrections[0]!
    expect(old.value).toBe('12.50')
    expect(old.display).toBe('12.5 mm')
    expect(old.enteredBy).toBe('Tomás Ferreira')
    expect(old.enteredAt).toEqual({ iso: '2026-11-30T13:30:00.000Z', date: '2026-11-30', time: '08:30' })
    expect(old.correctedBy).toBe('Ilse Brønnum')
    expect(old.correctedAt?.time).toBe('08:33')
    // one row per reading, not per database row; in the order the operation produces them
    expect(r.readings.map((x) => x.kind)).toEqual(['reamed_diameter', 'nail_length', 'native_angle', 'distal_depth'])
    expect(r.readings.find((x) => x.kind === 'native_angle')!.current.display).toBe('131°')
  })

  it('puts implanted/explanted items under implants and wasted ones under waste, by time then id', () => {
    const s = snapshot()
    s.items.push(item(205, { disposition: 'explanted', recordedAt: '2026-11-30T13:12:00Z', description: 'Cannulated screw 6.5 mm × 90 mm', kind: 'other' }))
    const r = buildRecord(s, META1)
    expect(r.implants.map((i) => i.id)).toEqual([205, 201, 203, 204])
    expect(r.waste.map((i) => i.id)).toEqual([202])
    expect(r.pending).toEqual([])
    expect(r.waste[0]!.wasteReasonLabel).toBe('Dropped')
    // same recordedAt: the lower id first
    const t = snapshot()
    t.items[2]!.disposition = 'implanted'
    expect(buildRecord(t, META1).implants.map((i) => i.id)).toEqual([201, 202, 203, 204])
  })

  it('lists every warning with its acknowledgement, and treats half an acknowledgement as none', () => {
    const s = snapshot()
    s.warnings.push({ code: 'late_scan', message: 'Scanned after closing.', acknowledgedBy: 'Ilse Brønnum', acknowledgedAt: null })
    const r = buildRecord(s, META1)
    expect(r.warnings.map((w) => [w.scope, w.code])).toEqual([
      ['case', 'explant_recorded'], ['case', 'late_scan'], ['sizing', 'angle_below_native'], ['item', 'size_differs'],
    ])
    expect(r.warnings[0]!.acknowledged).toEqual({ by: 'Ilse Brønnum', at: { iso: '2026-11-30T13:15:00.000Z', date: '2026-11-30', time: '08:15' } })
    expect(r.warnings[1]!.acknowledged).toBeNull()
    expect(r.warnings[3]!.subject).toBe('Distal screw (lot FH26202)')
  })

  it('records sizing as proposed vs chosen with reasons, warnings and the guide acknowledgement', () => {
    const s = snapshot()
    s.decisions[1]!.chosen = { itemId: 8, description: 'Distal locking screw 5.0 mm × 42 mm' }
    s.decisions[1]!.reason = 'Far cortex thin on the image.'
    const r = buildRecord(s, META1)
    const [nail, screw] = r.sizing.decisions
    expect(nail!.label).toBe('Nail')
    expect(nail!.matchesProposal).toBe(true)
    expect(nail!.guideAcknowledged).toBe(true)
    expect(nail!.warnings[0]!.source).toContain('Parry')
    expect(screw!.label).toBe('Distal screw 1')
    expect(screw!.matchesProposal).toBe(false)
    expect(screw!.reason).toBe('Far cortex thin on the image.')
    expect(screw!.proposed?.itemId).toBe(7)
    expect(screw!.chosen.itemId).toBe(8)
  })

  it('refuses inconsistent version metadata', () => {
    expect(() => buildRecord(snapshot(), { version: 2, previousVersionHash: null, addendumReason: 'x' })).toThrow(RangeError)
    expect(() => buildRecord(snapshot(), { version: 2, previousVersionHash: 'a'.repeat(64), addendumReason: null })).toThrow(RangeError)
    expect(() => buildRecord(snapshot(), { version: 1, previousVersionHash: 'a'.repeat(64), addendumReason: null })).toThrow(RangeError)
    expect(() => buildRecord(snapshot(), { version: 0, previousVersionHash: null, addendumReason: null })).toThrow(RangeError)
    expect(() => buildRecord(snapshot(), { version: 2, previousVersionHash: 'a'.repeat(64), addendumReason: 'Lot corrected.' })).not.toThrow()
  })
})

// ---------------------------------------------------------------------------------------------
// Time zone formatting
// ---------------------------------------------------------------------------------------------

describe('facility time', () => {
  it('shows instants in the facility zone as YYYY-MM-DD and HH:MM', () => {
    // 21 CFR 801.18 date format (YYYY-MM-DD); New York is UTC−5 in winter (IANA tz database)
    expect(recordTime('2026-12-01T03:30:00Z', 'America/New_York')).toEqual({ iso: '2026-12-01T03:30:00.000Z', date: '2026-11-30', time: '22:30' })
    // Berlin is UTC+1 in winter: the day rolls over, and midnight is 00:xx, never 24:xx
    expect(recordTime('2026-12-01T23:30:00Z', 'Europe/Berlin')).toEqual({ iso: '2026-12-01T23:30:00.000Z', date: '2026-12-02', time: '00:30' })
  })

  it('follows daylight saving time (US rule: second Sunday in March, Energy Policy Act of 2005)', () => {
    // 2026-03-08 02:00 local → 03:00: 06:30Z is 01:30 EST, 07:30Z is 03:30 EDT
    expect(recordTime('2026-03-08T06:30:00Z', 'America/New_York').time).toBe('01:30')
    expect(recordTime('2026-03-08T07:30:00Z', 'America/New_York').time).toBe('03:30')
  })

  it('uses the facility zone for the case date, not the host zone', () => {
    const s = snapshot()
    s.case.openedAt = '2026-12-01T03:30:00Z'
    const r = buildRecord(s, META1)
    expect(r.date).toBe('2026-11-30')
    expect(r.times.opened).toEqual({ iso: '2026-12-01T03:30:00.000Z', date: '2026-11-30', time: '22:30' })
    s.facility.timeZone = 'Asia/Tokyo'
    expect(buildRecord(s, META1).date).toBe('2026-12-01')
  })

  it('prints every date in the record as YYYY-MM-DD (21 CFR 801.18)', () => {
    const json = canonicalJson(buildRecord(snapshot(), META1))
    const dates = [...json.matchAll(/"date":"([^"]*)"/g)].map((m) => m[1])
    expect(dates.length).toBeGreaterThan(10)
    for (const d of dates) expect(d).toMatch(/^\d{4}-\d{2}-\d{2}$/)
  })

  it('refuses a time that is not an instant, and an unknown zone', () => {
    const s = snapshot()
    s.items[0]!.recordedAt = 'yesterday'
    expect(() => buildRecord(s, META1)).toThrow(RangeError)
    const t = snapshot()
    t.facility.timeZone = 'Mars/Olympus_Mons'
    expect(() => buildRecord(t, META1)).toThrow(RangeError)
  })
})

// ---------------------------------------------------------------------------------------------
// UDI symbol data
// ---------------------------------------------------------------------------------------------

/** HIBC mod-43 check character (value table of standards.md A2.4). */
function mod43(s: string): string {
  const set = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ-. $/+%'
  let sum = 0
  for (const ch of s) sum += set.indexOf(ch)
  return set.charAt(sum % 43)
}

describe('udiSymbol', () => {
  it('uses the GS1 HRI as it is for gs1datamatrix', () => {
    expect(udiSymbol({ issuer: 'GS1', hri: '(01)09521234500018(17)281231(10)FH2601A' }))
      .toEqual({ bcid: 'gs1datamatrix', text: '(01)09521234500018(17)281231(10)FH2601A' })
  })

  it('drops the HIBC leading + and check character, which bwip-js adds itself (standards.md Part B)', () => {
    // Published check value: +A123BJC5D6E71 → G (standards.md A2.4, Zebra DS9908 guide, Table 25)
    expect(mod43('+A123BJC5D6E71')).toBe('G')
    const data = '+A999FHCS650/$$3271130FHC2701'
    expect(udiSymbol({ issuer: 'HIBCC', hri: data + mod43(data) })).toEqual({ bcid: 'hibcdatamatrix', text: data.slice(1) })
    // Code 39 HRI form with * start/stop
    expect(udiSymbol({ issuer: 'HIBCC', hri: `*${data}${mod43(data)}*` })?.text).toBe(data.slice(1))
  })

  it('gives no symbol without an HRI or an issuer', () => {
    expect(udiSymbol({ issuer: 'GS1', hri: null })).toBeNull()
    expect(udiSymbol({ issuer: null, hri: '(01)09521234500018' })).toBeNull()
  })
})

// ---------------------------------------------------------------------------------------------
// closeProblems
// ---------------------------------------------------------------------------------------------

describe('closeProblems', () => {
  it('is empty for a complete case', () => {
    expect(closeProblems(snapshot())).toEqual([])
  })

  it('names an unacknowledged check with the item and what the check said', () => {
    const s = snapshot()
    s.items[2]!.checks[0]!.acknowledgedBy = null
    s.items[2]!.checks[0]!.acknowledgedAt = null
    expect(closeProblems(s)).toEqual(['The check on distal screw (lot FH26202) is not acknowledged: size differs from the confirmed size (40 mm).'])
  })

  it('asks for a waste reason, and for a note when the reason is "other" (trade.md §4.5)', () => {
    const s = snapshot()
    s.items[2]!.wasteReason = null
    expect(closeProblems(s)).toEqual(['The wasted distal screw (lot FH26202) has no waste reason.'])
    s.items[2]!.wasteReason = 'other'
    expect(closeProblems(s)).toEqual(['The wasted distal screw (lot FH26202) has the reason "other" but no note saying what happened.'])
    s.items[2]!.wasteNote = 'Packet torn when handed over.'
    expect(closeProblems(s)).toEqual([])
  })

  it('blocks an item not matched to the catalog', () => {
    const s = snapshot()
    s.items[1]!.description = ''
    s.items[1]!.kind = 'unmatched'
    expect(closeProblems(s)).toEqual(['An implant from lot FH26203 is not matched to the catalog.'])
  })

  it('blocks a case with nothing implanted', () => {
    const s = snapshot()
    for (const i of s.items) if (i.disposition === 'implanted') i.disposition = 'explanted'
    expect(closeProblems(s)).toContain('No implant is recorded as implanted.')
    expect(closeProblems({ ...snapshot(), items: [] })).toEqual(['No implant is recorded as implanted.'])
  })

  it('blocks an item without a disposition', () => {
    const s = snapshot()
    ;(s.items[3] as { disposition: string }).disposition = ''
    expect(closeProblems(s)).toEqual(['The end cap (lot FH26204) has no disposition: mark it implanted, wasted or explanted.'])
    expect(buildRecord(s, META1).pending.map((i) => i.id)).toEqual([204])
  })

  it('blocks an unacknowledged sizing caution or case caution, an unconfirmed guide, and a change without reason', () => {
    const s = snapshot()
    s.decisions[0]!.warnings[0]!.acknowledgedAt = null
    s.decisions[0]!.guideAcknowledged = false // trade.md §3.2 (aiming guide matches the nail)
    s.decisions[1]!.chosen = { itemId: 8, description: 'Distal locking screw 5.0 mm × 42 mm' }
    s.warnings[0]!.acknowledgedBy = ''
    expect(closeProblems(s)).toEqual([
      'The aiming guide is not confirmed against the nail (angle, side and length).',
      'The distal screw 1 differs from the proposed size and has no reason.',
      'The case caution is not acknowledged: a screw from an earlier operation was removed.',
      'The sizing caution for the nail is not acknowledged: the nail angle 130° is below the native angle 131°.',
    ])
  })

  it('gives the same list whatever the row order', () => {
    const s = snapshot()
    s.items[2]!.wasteReason = null
    s.items[1]!.kind = 'unmatched'
    s.warnings[0]!.acknowledgedAt = null
    expect(closeProblems(shuffled(s))).toEqual(closeProblems(s))
    expect(closeProblems(s)).toHaveLength(3)
  })
})
