/**
 * Record PDF and patient implant card: time to build each, in-process, from a snapshot made in code
 * (a signed long-nail record with 10 implants). Median of many runs after a few warm-up runs; the
 * first (cold) run is reported too. A control run (an empty document with the same fonts embedded,
 * saved) shows how much of the time is the fonts alone.
 *
 *   tsx bench/pdf.ts [--runs 40] [--warm 5] [--profile 10]    prints one JSON object
 */
import { PDFDocument } from 'pdf-lib'
import { ATTESTATION } from '../shared/schemas/record'
import { buildRecord, recordHash, type CaseSnapshot } from '../shared/utils/record'
import { embedInter } from '../server/utils/pdf/fonts'
import { renderImplantCard } from '../server/utils/pdf/implant-card'
import { renderRecordPdf } from '../server/utils/pdf/record-pdf'
import { summarizeProfile, type CpuProfile } from './lib/profile'

const MAKER = { name: 'Fernhollow Medical (demo)', address: '1 Example Quay, Demo Town, DM1 0AA', website: 'https://fernhollow.example' }

function gtin(n: number): string {
  const body = `095212345${String(n).padStart(4, '0')}` // GS1 prefix 952: for demonstrations
  let sum = 0
  for (let i = 0; i < 13; i++) sum += Number(body[12 - i]) * (i % 2 === 0 ? 3 : 1)
  return body + String((10 - (sum % 10)) % 10)
}
function mod43(s: string): string {
  const set = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ-. $/+%'
  let sum = 0
  for (const ch of s) sum += set.indexOf(ch)
  return set.charAt(sum % 43)
}

type Item = CaseSnapshot['items'][number]
const SCRUB = 'Ilse Marbeford'
const SURGEON = 'Dr. Runa Koslewick'

function gs1(id: number, n: number, kind: string, description: string, lot: string, serial: string | null, expiry: string, at: string): Item {
  const g = gtin(n)
  const e = expiry.slice(2, 4) + expiry.slice(5, 7) + expiry.slice(8, 10)
  return {
    id, description, kind, maker: MAKER, issuer: 'GS1', di: g, lot, serial, expiry, manufactured: null,
    hri: `(01)${g}(17)${e}(10)${lot}${serial ? `(21)${serial}` : ''}`, source: 'wedge', disposition: 'implanted',
    wasteReason: null, wasteNote: null, recordedBy: SCRUB, recordedAt: at, implantCard: kind === 'nail',
    checks: kind === 'nail' ? [{ code: 'aiming_guide', message: 'Set the aiming guide to 130° and right, the same as this nail.', acknowledgedBy: SCRUB, acknowledgedAt: at }] : [],
  }
}
function hibc(id: number, primary: string, lot: string, description: string, at: string): Item {
  const data = `+${primary}/$$3271130${lot}`
  return {
    id, description, kind: 'other', maker: MAKER, issuer: 'HIBCC', di: primary, lot, serial: null, expiry: '2027-11-30', manufactured: null,
    hri: data + mod43(data), source: 'manual', disposition: 'explanted', wasteReason: null, wasteNote: null,
    recordedBy: SCRUB, recordedAt: at, checks: [], implantCard: false,
  }
}

/** Ten implants: two screws taken out from an earlier fixation, then nail, head element, set screw, four distal screws, end cap. */
export function benchSnapshot(): CaseSnapshot {
  const t = (m: number) => new Date(Date.UTC(2026, 10, 30, 13, 0) + m * 60_000).toISOString()
  const NAIL = 'Trochanteric nail, long, right, 11 mm × 380 mm, 130°'
  const DS = (l: number) => `Distal locking screw 5.0 mm × ${l} mm`
  const r = (id: number, kind: string, slot: number, value: string, unit: 'mm' | 'deg', m: number, supersedesId: number | null = null) =>
    ({ id, kind, slot, value, unit, enteredBy: SCRUB, enteredAt: t(m), supersedesId })
  const d = (component: 'nail' | 'head_element' | 'distal_screw', slot: number, id: number, description: string, m: number, guide = false) =>
    ({ component, slot, proposed: { itemId: id, description }, chosen: { itemId: id, description }, reason: null,
      reasons: ['Stocked size nearest the reading within the rule profile.'], warnings: [], guideAcknowledged: guide, decidedBy: SURGEON, decidedAt: t(m) })
  return {
    facility: { name: 'Amberlow General Hospital (bench)', timeZone: 'Europe/London' },
    case: { id: 424242, procedure: 'long_nail', side: 'right', theatre: 'Theatre 3 (trauma)', scheduledAt: t(0), openedAt: t(10), closedAt: t(130) },
    patient: { mrn: 'B010482213', familyName: 'Holmvarick', givenName: 'Bodil', birthDate: '1939-05-14', sex: 'female' },
    team: { surgeon: { id: 3, name: SURGEON }, circulator: { id: 4, name: 'Tove Saldanford' }, scrub: { id: 2, name: SCRUB } },
    ruleProfile: { version: 1, nailClearanceMm: 1, distalScrewRounding: 'up', tadLimitMm: 25 },
    readings: [
      r(1, 'reamed_diameter', 0, '12.50', 'mm', 20), r(12, 'reamed_diameter', 0, '12.00', 'mm', 22, 1), r(2, 'nail_length', 0, '385.00', 'mm', 25),
      r(3, 'native_angle', 0, '131.00', 'deg', 15), r(4, 'head_element_length', 0, '98.00', 'mm', 40), r(5, 'head_compression', 0, '3.00', 'mm', 41),
      r(6, 'distal_depth', 1, '39.00', 'mm', 60), r(7, 'distal_depth', 2, '41.00', 'mm', 65), r(8, 'distal_depth', 3, '35.00', 'mm', 70),
      r(9, 'distal_depth', 4, '37.00', 'mm', 75), r(10, 'tad_ap_tip_apex', 0, '12.40', 'mm', 50), r(11, 'tad_lat_tip_apex', 0, '11.10', 'mm', 51),
    ],
    decisions: [
      d('nail', 0, 131, NAIL, 30, true), d('head_element', 0, 215, 'Head element (lag screw) 10.5 mm × 95 mm', 42),
      d('distal_screw', 1, 227, DS(40), 61), d('distal_screw', 2, 228, DS(42), 66), d('distal_screw', 3, 225, DS(36), 71), d('distal_screw', 4, 226, DS(38), 76),
    ],
    tad: { tadMm: 23.5, overLimit: false, limitMm: 25 },
    items: [
      hibc(101, 'A999FHCS650', 'FHC2701', 'Cannulated screw 6.5 mm × 90 mm (earlier fixation)', t(12)),
      hibc(102, 'A999FHCS600', 'FHC2702', 'Cannulated screw 6.5 mm × 60 mm (earlier fixation)', t(13)),
      gs1(103, 131, 'nail', NAIL, 'FH260411L', 'NL00381701', '2031-03-31', t(31)),
      gs1(104, 215, 'head_element', 'Head element (lag screw) 10.5 mm × 95 mm', 'FH260233H', null, '2031-01-31', t(43)),
      gs1(105, 230, 'set_screw', 'Set screw for head element', 'FH260341S', null, '2031-02-28', t(45)),
      gs1(106, 227, 'distal_screw', DS(40), 'FH260310D', null, '2031-02-28', t(62)),
      gs1(107, 228, 'distal_screw', DS(42), 'FH260311D', null, '2031-02-28', t(67)),
      gs1(108, 225, 'distal_screw', DS(36), 'FH260308D', null, '2031-02-28', t(72)),
      gs1(109, 226, 'distal_screw', DS(38), 'FH260309D', null, '2031-02-28', t(77)),
      gs1(110, 233, 'end_cap', 'End cap, extension 5 mm', 'FH260122C', null, '2030-12-31', t(95)),
    ],
    warnings: [],
  }
}

const now = () => Number(process.hrtime.bigint()) / 1e6
const cpu = () => { const u = process.cpuUsage(); return (u.user + u.system) / 1000 }
const med = (xs: number[]) => { const s = [...xs].sort((a, b) => a - b); const m = s.length >> 1; return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2 }

/** Wall time per run, and CPU time beside it: on a shared machine the wall time also holds waiting. */
async function timeRuns(runs: number, warm: number, fn: () => Promise<unknown>) {
  const cold0 = now()
  await fn()
  const cold = now() - cold0
  for (let i = 0; i < warm; i++) await fn()
  const times: number[] = []
  const cpus: number[] = []
  for (let i = 0; i < runs; i++) {
    const t0 = now()
    const c0 = cpu()
    await fn()
    cpus.push(cpu() - c0)
    times.push(now() - t0)
  }
  times.sort((a, b) => a - b)
  const at = (p: number) => times[Math.min(times.length - 1, Math.max(0, Math.ceil((p / 100) * times.length) - 1))]!
  return { runs, coldMs: cold, medianMs: med(times), p95Ms: at(95), minMs: times[0]!, maxMs: times[times.length - 1]!, cpuMedianMs: med(cpus) }
}

/** Where the CPU goes while `fn` runs (in-process sampling profiler). */
async function profile(runs: number, fn: () => Promise<unknown>) {
  const { Session } = await import('node:inspector/promises')
  const session = new Session()
  session.connect()
  await session.post('Profiler.enable')
  await session.post('Profiler.setSamplingInterval', { interval: 200 })
  await session.post('Profiler.start')
  for (let i = 0; i < runs; i++) await fn()
  const { profile: p } = (await session.post('Profiler.stop')) as { profile: CpuProfile }
  session.disconnect()
  return { runs, ...summarizeProfile(p, { top: 8 }) }
}

export async function pdfBench(runs: number, warmRuns = 5, profileRuns = 10) {
  const snapshot = benchSnapshot()
  const record = buildRecord(snapshot, { version: 1, previousVersionHash: null, addendumReason: null })
  if (record.implants.length !== 10) throw new Error(`the bench record has ${record.implants.length} implants, not 10`)
  const hash = await recordHash(record)
  const signature = { signerName: SURGEON, signedAt: '2026-11-30T15:30:00Z', attestation: ATTESTATION, recordHash: hash }
  let recordBytes = 0
  let cardBytes = 0
  let pages = 0
  const warm = warmRuns
  const recordPdf = await timeRuns(runs, warm, async () => {
    // what signing does: the canonical record, its hash, the signed PDF
    const rec = buildRecord(snapshot, { version: 1, previousVersionHash: null, addendumReason: null })
    const h = await recordHash(rec)
    const pdf = await renderRecordPdf(rec, { signature: { ...signature, recordHash: h }, debug: (l) => (pages = l.pages) })
    recordBytes = pdf.length
  })
  const card = await timeRuns(runs, warm, async () => {
    const pdf = await renderImplantCard(record, 103, { institution: 'Amberlow General Hospital (bench), 11 Example Road, Amberlow' })
    cardBytes = pdf.length
  })
  const fontsOnly = await timeRuns(runs, warm, async () => {
    const doc = await PDFDocument.create({ updateMetadata: false })
    await embedInter(doc)
    doc.addPage()
    await doc.save({ useObjectStreams: true })
  })
  const renderRecord = () => renderRecordPdf(record, { signature })
  const prof = profileRuns > 0 ? await profile(profileRuns, renderRecord) : null
  return {
    implants: record.implants.length, pages,
    record: { ...recordPdf, bytes: recordBytes },
    card: { ...card, bytes: cardBytes },
    fontsOnly,
    recordProfile: prof,
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const arg = (name: string, dflt: number) => {
    const i = process.argv.indexOf(name)
    return i > 0 ? Number(process.argv[i + 1]) : dflt
  }
  pdfBench(arg('--runs', 40), arg('--warm', 5), arg('--profile', 10)).then((r) => console.log(JSON.stringify(r))).catch((e) => {
    console.error(`[bench] pdf failed: ${e instanceof Error ? e.stack : e}`)
    process.exit(1)
  })
}
