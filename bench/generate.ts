/**
 * The benchmark's dataset: ten years of hip-fracture nailing in an invented group of 20 hospitals.
 * At --scale 1: 500,000 cases, 2,000,000 case items, ~400,000 patients, with the scan events, stock
 * movements (each pack out, each line received), audit rows and some PHI-access rows the app would have
 * written along the way. Everything is invented (demo maker, GS1 demo prefix 952, made-up places and
 * people). Reproducible: the same --seed and --scale give the same rows.
 *
 *   tsx bench/generate.ts [--db isthmus_bench] [--scale 1] [--seed isthmus-bench-1] [--end 2026-11-30] [--force]
 *
 * The database is dropped, made again, migrated with db/migrate.ts and loaded with COPY; secondary
 * indexes are dropped for the load and built afterwards (faster, and what a restore does), then
 * VACUUM ANALYZE and a checkpoint, so the benchmark starts from a settled database.
 * Without --force it does nothing when bench_meta says this seed and scale are already loaded under
 * the current migrations.
 *
 * Not generated (no measured path reads them except by case id): readings and sizing decisions of past
 * cases, stored record PDFs, login attempts, e-mail.
 */
import { readdirSync } from 'node:fs'
import path from 'node:path'
import { demoCatalog, DEMO_MAKER, type DemoItem } from '../db/demo-catalog'
import { hashPassword } from '../db/password'
import { CopyStream, esc, NULL } from './lib/copy'
import { dbUrl, log, ROOT, run, withClient } from './lib/env'
import { Rng } from './lib/prng'

export const BENCH_PASSWORD = 'isthmus-bench-password'
export const GROUP_COORDINATOR = 'coordinator@bench.isthmus.test'
export const benchEmail = (role: string, facilityCode: string) => `${role}.${facilityCode.toLowerCase()}@bench.isthmus.test`

export interface GenOptions { db: string; scale: number; seed: string; end: string; force: boolean }

export function parseGenArgs(argv: string[]): GenOptions {
  const o: GenOptions = { db: 'isthmus_bench', scale: 1, seed: 'isthmus-bench-1', end: '2026-11-30', force: false }
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!
    const val = () => {
      const v = argv[++i]
      if (v === undefined) throw new Error(`${a} needs a value`)
      return v
    }
    if (a === '--db') o.db = val()
    else if (a === '--scale') o.scale = Number(val())
    else if (a === '--seed') o.seed = val()
    else if (a === '--end') o.end = val()
    else if (a === '--force' || a === '--regenerate') o.force = true
    else throw new Error(`unknown option ${a}`)
  }
  if (!(o.scale > 0 && o.scale <= 4)) throw new Error('--scale must be in (0, 4]')
  if (!/^\d{4}-\d{2}-\d{2}$/.test(o.end)) throw new Error('--end must be YYYY-MM-DD')
  if (!/^[a-z0-9_]+$/.test(o.db)) throw new Error('--db: lower-case letters, digits and _ only')
  return o
}

// ---------------------------------------------------------------------------------------------
// The invented group
// ---------------------------------------------------------------------------------------------

const TOWNS = ['Amberlow', 'Brindlemoor', 'Caskwell', 'Dunmarrow', 'Elderfen', 'Fallowmere', 'Glimmerby', 'Harrowdene',
  'Ivybrook Cross', 'Juniper Hollow', 'Kestrelmouth', 'Larkspur Vale', 'Mossgate', 'Nettlebarrow', 'Oakhaven Reach',
  'Pennywhistle', 'Quillmarsh', 'Rookwarren', 'Saltmire', 'Thistledown Ford']
const KINDS = ['General Hospital', 'District Hospital', 'Infirmary', 'Medical Centre', 'Regional Hospital']
const ZONES = ['America/New_York', 'America/Chicago', 'America/Denver', 'America/Los_Angeles', 'Europe/London',
  'Europe/Dublin', 'Europe/Berlin', 'Europe/Stockholm', 'Australia/Sydney', 'Pacific/Auckland']
const GIVEN = ['Ada', 'Bram', 'Cato', 'Dara', 'Elin', 'Fenna', 'Gideon', 'Hale', 'Ines', 'Joris', 'Kaia', 'Linus', 'Mirela',
  'Nico', 'Oona', 'Pim', 'Rhea', 'Sten', 'Tamsin', 'Ulla', 'Vero', 'Wim', 'Yara', 'Zeno', 'Aurelie', 'Bodil', 'Cyril',
  'Dagny', 'Emeric', 'Freya', 'Greta', 'Hector', 'Ilse', 'Jonas', 'Kirsi', 'Lotte', 'Maren', 'Noor', 'Otto', 'Petra',
  'Quentin', 'Runa', 'Silas', 'Tove', 'Ursel', 'Viggo', 'Wilma', 'Xavi', 'Ylva', 'Zelda', 'Agnès', 'Björn', 'Céleste', 'Dörte']
const SYL1 = ['Al', 'Bar', 'Cor', 'Dun', 'El', 'Fen', 'Gar', 'Hol', 'Ist', 'Jar', 'Kel', 'Lor', 'Mar', 'Nor', 'Os', 'Pel',
  'Quen', 'Ros', 'Sal', 'Tor', 'Ul', 'Var', 'Wen', 'Yel', 'Zor', 'Brae', 'Crin', 'Drom', 'Esk', 'Frel', 'Grun', 'Hask']
const SYL2 = ['be', 'ca', 'de', 'fa', 'ga', 'li', 'mo', 'ne', 'ra', 'si', 'te', 'vo', '', '', '', '']
const SYL3 = ['ck', 'dan', 'ford', 'holm', 'ley', 'mark', 'ness', 'ridge', 'sby', 'ton', 'vik', 'wick', 'well', 'stead',
  'berg', 'feld', 'gaard', 'mont', 'quist', 'hurst', 'lund', 'rath', 'wyn', 'oza']

function familyName(r: Rng): string {
  const one = () => r.pick(SYL1) + r.pick(SYL2) + r.pick(SYL3)
  return r.chance(0.05) ? `${one()}-${one()}` : one()
}

const pad = (n: number, w: number) => String(n).padStart(w, '0')
const DAY = 86_400_000

/** 'YYYY-MM-DD HH:MM:SS Zone/Name' from a wall-clock time: PostgreSQL applies the zone's offset on input. */
function wall(ms: number, zone: string): string {
  const s = new Date(ms).toISOString()
  return `${s.slice(0, 10)} ${s.slice(11, 19)} ${zone}`
}
const isoDay = (ms: number) => new Date(ms).toISOString().slice(0, 10)
const yymmdd = (day: string) => day.slice(2, 4) + day.slice(5, 7) + day.slice(8, 10)
/** Last day of the month `months` after the month of ms. */
function endOfMonthAfter(ms: number, months: number): string {
  const d = new Date(ms)
  return isoDay(Date.UTC(d.getUTCFullYear(), d.getUTCMonth() + months + 1, 0))
}

// ---------------------------------------------------------------------------------------------
// The catalog and its lots
// ---------------------------------------------------------------------------------------------

interface Item extends DemoItem { id: number }

/** Lots per item over the eleven years (a year of lots before the first case): "a few hundred" for screws. */
function lotsPerItem(i: DemoItem): number {
  switch (i.kind) {
    case 'nail': return i.nail_type === 'short' ? 240 : 120
    case 'head_element': return 300
    case 'distal_screw': return 360
    case 'set_screw': return 400
    default: return 150
  }
}
const KIND_LETTER: Record<string, string> = { nail: 'N', head_element: 'H', distal_screw: 'D', set_screw: 'S', end_cap: 'C' }
const LEAD_DAYS = 365

class Lots {
  code: string[] = []
  expiry: string[] = []
  item: number[] = []
  uses: Int32Array
  base = new Map<number, number>()
  count = new Map<number, number>()
  period = new Map<number, number>()

  constructor(items: Item[], spanDays: number, startMs: number) {
    const perYear = new Map<number, number>()
    let g = 0
    for (const it of items) {
      const n = lotsPerItem(it)
      const period = (LEAD_DAYS + spanDays) / n
      this.base.set(it.id, g)
      this.count.set(it.id, n)
      this.period.set(it.id, period)
      for (let k = 0; k < n; k++, g++) {
        const startLot = startMs + (-LEAD_DAYS + k * period) * DAY
        const yy = new Date(startLot).getUTCFullYear() % 100
        const seq = (perYear.get(yy) ?? 0) + 1
        perYear.set(yy, seq)
        // like the demo's lots (FH + digits + letter): maker prefix, year, sequence in the year, kind
        this.code.push(`FH${pad(yy, 2)}${pad(seq, 4)}${KIND_LETTER[it.kind] ?? 'X'}`)
        this.expiry.push(endOfMonthAfter(startLot, 60)) // five years of sterile shelf life
        this.item.push(it.id)
      }
    }
    this.uses = new Int32Array(g)
  }

  /** The lot a hospital would open on `day`: the current one, sometimes one or two older still on the shelf. */
  pick(itemId: number, day: number, r: Rng): number {
    const n = this.count.get(itemId)!
    const cur = Math.floor((day + LEAD_DAYS) / this.period.get(itemId)!)
    const lag = Math.floor(r.next() ** 2 * 3)
    return this.base.get(itemId)! + Math.max(0, Math.min(n - 1, cur - lag))
  }

  isRecent(g: number): boolean {
    const id = this.item[g]!
    return g - this.base.get(id)! >= this.count.get(id)! - 3
  }
}

// ---------------------------------------------------------------------------------------------
// Generation
// ---------------------------------------------------------------------------------------------

interface Facility {
  id: number; code: string; name: string; zone: string; weight: number
  theatres: number[]; surgeons: number[]; circulators: number[]; scrubs: number[]; coordinator: number; admin: number
  core: number; patients: number[]; mrnNext: number
}

const BULK_TABLES = ['patients', 'cases', 'case_items', 'scan_events', 'stock_movements', 'audit_log', 'stock_lines', 'phi_access_log']

function migrationNames(): string[] {
  return readdirSync(path.join(ROOT, 'db/migrations')).filter((f) => f.endsWith('.ts')).map((f) => f.replace(/\.ts$/, '')).sort()
}

export async function generatedMeta(db: string): Promise<Record<string, any> | null> {
  try {
    return await withClient(db, async (c) => {
      const r = await c.query(`SELECT value FROM bench_meta WHERE key = 'dataset'`)
      return r.rows[0]?.value ?? null
    })
  } catch {
    return null // no database, or no bench_meta: not generated
  }
}

export function metaMatches(meta: Record<string, any> | null, o: Pick<GenOptions, 'scale' | 'seed' | 'end'>): boolean {
  return !!meta && meta.complete === true && meta.scale === o.scale && meta.seed === o.seed && meta.end === o.end
    && JSON.stringify(meta.migrations) === JSON.stringify(migrationNames())
}

export async function generate(o: GenOptions): Promise<Record<string, any>> {
  const existing = await generatedMeta(o.db)
  if (!o.force && metaMatches(existing, o)) {
    log('generate', `${o.db} already holds seed ${o.seed} at scale ${o.scale}: nothing to do (--regenerate to rebuild)`)
    return existing!
  }
  const t0 = Date.now()
  log('generate', `making ${o.db} afresh (scale ${o.scale}, seed ${o.seed})`)
  run('bash', ['scripts/db.sh', 'createdb', o.db, '--fresh'])
  run('npx', ['tsx', 'db/migrate.ts'], { env: { DATABASE_URL: dbUrl(o.db) } })

  const nCases = Math.max(20, Math.round(500_000 * o.scale))
  const nItems = Math.max(nCases * 2 + 1, Math.round(2_000_000 * o.scale))
  const endMs = Date.parse(`${o.end}T00:00:00Z`)
  const spanDays = 3652
  const startMs = endMs - spanDays * DAY
  const passwordHash = await hashPassword(BENCH_PASSWORD) // one hash for all: scrypt per user would take minutes

  // Secondary indexes and unreferenced unique constraints go for the load and come back afterwards.
  const rebuild = await withClient(o.db, async (c) => {
    const idx = await c.query(`
      SELECT i.indexrelid::regclass::text AS name, pg_get_indexdef(i.indexrelid) AS def
      FROM pg_index i JOIN pg_class t ON t.oid = i.indrelid
      WHERE t.relnamespace = 'public'::regnamespace AND t.relname = ANY($1)
        AND NOT EXISTS (SELECT 1 FROM pg_constraint k WHERE k.conindid = i.indexrelid)`, [BULK_TABLES])
    const uq = await c.query(`
      SELECT k.conname AS name, k.conrelid::regclass::text AS tbl, pg_get_constraintdef(k.oid) AS def
      FROM pg_constraint k
      WHERE k.contype = 'u' AND k.conrelid::regclass::text = ANY($1)
        AND NOT EXISTS (SELECT 1 FROM pg_constraint f WHERE f.contype = 'f' AND f.conindid = k.conindid)`, [BULK_TABLES])
    for (const r of idx.rows) await c.query(`DROP INDEX ${r.name}`)
    for (const r of uq.rows) await c.query(`ALTER TABLE ${r.tbl} DROP CONSTRAINT ${r.name}`)
    return {
      indexes: idx.rows.map((r) => r.def as string),
      constraints: uq.rows.map((r) => `ALTER TABLE ${r.tbl} ADD CONSTRAINT ${r.name} ${r.def}`),
    }
  })

  // Separate streams per concern, so changing one distribution does not shift every other value.
  const rGroup = new Rng(`${o.seed}/group`)
  const rComp = new Rng(`${o.seed}/composition`)
  const rCase = new Rng(`${o.seed}/cases`)
  const rKey = new Rng(`${o.seed}/keys`)
  const rLot = new Rng(`${o.seed}/lots`)

  // --- the group: facilities, theatres, people, profiles, shelves -----------------------------
  const facilities: Facility[] = []
  const theatreRows: string[] = []
  const userRows: string[] = []
  let userId = 0
  let theatreId = 0
  const addUser = (email: string, name: string, role: string, facilityId: number | null) => {
    userId++
    userRows.push([userId, esc(email), esc(name), role, esc(passwordHash), 't', facilityId ?? NULL, `${o.end} 00:00:00+00`].join('\t'))
    return userId
  }
  addUser(GROUP_COORDINATOR, 'Maren Holmquist-Vey (bench)', 'coordinator', null)
  // The known accounts first, five per facility at ids 2 + 5·(f-1) …: the pgbench ingest script derives
  // the scrub's id from its client number (pgbench variables are numbers only).
  for (let f = 1; f <= 20; f++) {
    const code = `B${pad(f, 2)}`
    const fac: Facility = {
      id: f, code, name: `${TOWNS[f - 1]} ${KINDS[(f * 7) % KINDS.length]} (bench)`, zone: ZONES[(f - 1) % ZONES.length]!,
      weight: Math.exp(rGroup.normal(0, 0.45)), theatres: [], surgeons: [], circulators: [], scrubs: [],
      coordinator: 0, admin: 0, core: 2 * f - 1, patients: [], mrnNext: 100_000 + rGroup.int(800_000),
    }
    fac.scrubs.push(addUser(benchEmail('scrub', code), `${rGroup.pick(GIVEN)} ${familyName(rGroup)}`, 'scrub', f))
    fac.circulators.push(addUser(benchEmail('circulator', code), `${rGroup.pick(GIVEN)} ${familyName(rGroup)}`, 'circulator', f))
    fac.surgeons.push(addUser(benchEmail('surgeon', code), `Dr. ${rGroup.pick(GIVEN)} ${familyName(rGroup)}`, 'surgeon', f))
    fac.coordinator = addUser(benchEmail('coordinator', code), `${rGroup.pick(GIVEN)} ${familyName(rGroup)}`, 'coordinator', f)
    fac.admin = addUser(benchEmail('admin', code), `${rGroup.pick(GIVEN)} ${familyName(rGroup)}`, 'admin', f)
    facilities.push(fac)
  }
  for (const fac of facilities) {
    const f = fac.id
    const code = fac.code
    const nTheatres = 3 + rGroup.int(6)
    for (let t = 1; t <= nTheatres; t++) {
      theatreId++
      fac.theatres.push(theatreId)
      theatreRows.push([theatreId, f, `T${t}`, t === nTheatres ? `Theatre ${t} (trauma)` : `Theatre ${t}`, 't'].join('\t'))
    }
    const staff = (role: 'surgeon' | 'circulator' | 'scrub', n: number, list: number[]) => {
      for (let k = 0; k < n; k++) {
        const given = rGroup.pick(GIVEN)
        const fam = familyName(rGroup)
        const email = `${given.normalize('NFD').replace(/[^A-Za-z]/g, '').toLowerCase()}.${fam.replace(/[^A-Za-z]/g, '').toLowerCase()}.${userId + 1}@${code.toLowerCase()}.bench.isthmus.test`
        list.push(addUser(email, `${role === 'surgeon' ? 'Dr. ' : ''}${given} ${fam}`, role, f))
      }
    }
    staff('surgeon', 4 + rGroup.int(10), fac.surgeons)
    staff('circulator', 8 + rGroup.int(10), fac.circulators)
    staff('scrub', 8 + rGroup.int(10), fac.scrubs)
  }
  const facilityWeights = facilities.map((f) => f.weight)

  const items: Item[] = demoCatalog().map((it, i) => ({ ...it, id: i + 1 }))
  const lots = new Lots(items, spanDays, startMs)
  const shortNail = new Map<string, number>()
  const longNail = new Map<string, number>()
  const byLen = { head_element: new Map<number, number>(), distal_screw: new Map<number, number>(), end_cap: new Map<number, number>() }
  let setScrew = 0
  for (const it of items) {
    if (it.kind === 'nail' && it.nail_type === 'short') shortNail.set(`${it.angle_deg}/${it.diameter_mm}/${it.length_mm}`, it.id)
    else if (it.kind === 'nail') longNail.set(`${it.side}/${it.angle_deg}/${it.diameter_mm}/${it.length_mm}`, it.id)
    else if (it.kind === 'set_screw') setScrew = it.id
    else if (it.kind in byLen) byLen[it.kind as keyof typeof byLen].set(Number(it.length_mm), it.id)
  }
  const itemById = new Map(items.map((i) => [i.id, i]))

  const small = async (table: string, cols: string[], rows: string[]) => {
    const s = new CopyStream(o.db, table, cols)
    for (const r of rows) s.row(r)
    await s.end()
  }
  await small('facilities', ['id', 'code', 'name', 'time_zone', 'address', 'created_at'],
    facilities.map((f) => [f.id, f.code, esc(f.name), f.zone, esc(`${10 + f.id} Example Road, ${TOWNS[f.id - 1]}`), wall(startMs - 30 * DAY, f.zone)].join('\t')))
  await small('theatres', ['id', 'facility_id', 'code', 'name', 'active'], theatreRows)
  await small('users', ['id', 'email', 'name', 'role', 'password_hash', 'active', 'facility_id', 'created_at'], userRows)
  await small('rule_profiles', ['id', 'facility_id', 'version', 'nail_clearance_mm', 'distal_screw_rounding', 'tad_limit_mm', 'created_by', 'created_at'],
    facilities.map((f) => [f.id, f.id, 1, '1.00', 'up', '25.00', f.admin, wall(startMs - 30 * DAY, f.zone)].join('\t')))
  await small('makers', ['id', 'name', 'address', 'website'], [[1, esc(DEMO_MAKER.name), esc(DEMO_MAKER.address), esc(DEMO_MAKER.website)].join('\t')])
  await small('catalog_items', ['id', 'kind', 'description', 'maker_id', 'reference', 'gtin', 'diameter_mm', 'length_mm', 'angle_deg', 'side', 'nail_type', 'material', 'unit_cost', 'implant_card', 'active'],
    items.map((i) => [i.id, i.kind, esc(i.description), 1, i.reference, i.gtin, i.diameter_mm ?? NULL, i.length_mm ?? NULL, i.angle_deg ?? NULL,
      i.side ?? NULL, i.nail_type ?? NULL, esc(i.material), i.unit_cost, i.implant_card ? 't' : 'f', 't'].join('\t')))
  await small('stock_locations', ['id', 'facility_id', 'code', 'name', 'theatre_id'], facilities.flatMap((f) => [
    [f.core, f.id, 'CORE', 'Core store', NULL].join('\t'),
    [f.core + 1, f.id, 'TRAUMA-CART', 'Trauma theatre nail cart', f.theatres[f.theatres.length - 1]].join('\t'),
  ]))
  // par per item at the core store: what a hospital keeps of each size
  let parId = 0
  await small('par_levels', ['id', 'location_id', 'item_id', 'par', 'updated_by'], facilities.flatMap((f) => items.map((i) => {
    const par = i.kind === 'nail' ? (i.nail_type === 'short' ? 2 : 1) : i.kind === 'head_element' ? 3 : i.kind === 'distal_screw' ? 4 : i.kind === 'set_screw' ? 6 : 2
    return [++parId, f.core, i.id, par, f.admin].join('\t')
  })))

  // --- pass 1: how many packs each case opens, nudged so the total is exactly nItems ------------
  const isLong = new Uint8Array(nCases)
  const nDistal = new Uint8Array(nCases)
  const hasSet = new Uint8Array(nCases)
  const hasCap = new Uint8Array(nCases)
  const waste = new Uint8Array(nCases) // 0 none, 1 a distal screw of the wrong size, 2 a dropped head element
  let total = 0
  for (let c = 0; c < nCases; c++) {
    isLong[c] = rComp.chance(0.35) ? 1 : 0
    nDistal[c] = isLong[c] ? [1, 2, 3][rComp.weighted([15, 80, 5])]! : [0, 1, 2][rComp.weighted([5, 85, 10])]!
    hasSet[c] = rComp.chance(0.55) ? 1 : 0
    hasCap[c] = rComp.chance(0.08) ? 1 : 0
    waste[c] = rComp.chance(0.02) ? (nDistal[c]! > 0 && rComp.chance(0.6) ? 1 : 2) : 0
    total += 2 + nDistal[c]! + hasSet[c]! + hasCap[c]! + (waste[c] ? 1 : 0)
  }
  for (let tries = 0; total !== nItems; tries++) {
    if (tries > nCases * 50) throw new Error(`could not make ${nItems} items from ${nCases} cases (have ${total})`)
    const c = rComp.int(nCases)
    if (total < nItems) {
      if (!hasSet[c]) { hasSet[c] = 1; total++ } else if (!hasCap[c]) { hasCap[c] = 1; total++ } else if (nDistal[c]! < 4) { nDistal[c]!++; total++ }
    } else if (hasSet[c]) { hasSet[c] = 0; total-- } else if (hasCap[c]) { hasCap[c] = 0; total-- }
  }

  // When each case happened: more over the years (an ageing population), a little more in winter.
  const when = new Float64Array(nCases)
  for (let c = 0; c < nCases; c++) {
    for (;;) {
      const d = rCase.next() * spanDays
      const w = (1 + 0.03 * d / 365) * (1 + 0.12 * Math.cos((2 * Math.PI * ((d + 20) % 365.25)) / 365.25))
      if (rCase.next() * 1.45 < w) { when[c] = d; break }
    }
  }
  when.sort()

  // --- pass 2: the rows -----------------------------------------------------------------------
  const S = {
    patients: new CopyStream(o.db, 'patients', ['id', 'facility_id', 'mrn', 'family_name', 'given_name', 'birth_date', 'sex', 'created_at']),
    cases: new CopyStream(o.db, 'cases', ['id', 'facility_id', 'theatre_id', 'patient_id', 'procedure', 'side', 'surgeon_id', 'circulator_id', 'scrub_id',
      'scheduled_at', 'status', 'rule_profile_id', 'client_key', 'created_by', 'created_at', 'opened_at', 'closed_at']),
    items: new CopyStream(o.db, 'case_items', ['id', 'case_id', 'item_id', 'raw_scan', 'issuer', 'di', 'lot', 'serial', 'expiry', 'hri', 'source',
      'disposition', 'waste_reason', 'waste_note', 'checks', 'acknowledged_by', 'acknowledged_at', 'stock_line_id', 'client_key', 'recorded_by', 'recorded_at']),
    scans: new CopyStream(o.db, 'scan_events', ['id', 'case_id', 'client_key', 'raw', 'source', 'result', 'code', 'status_code', 'response', 'case_item_id', 'scanned_by', 'scanned_at']),
    moves: new CopyStream(o.db, 'stock_movements', ['id', 'stock_line_id', 'delta', 'reason', 'case_item_id', 'moved_by', 'moved_at']),
    audit: new CopyStream(o.db, 'audit_log', ['at', 'actor_id', 'action', 'entity', 'entity_id', 'details', 'ip']),
    phi: new CopyStream(o.db, 'phi_access_log', ['at', 'user_id', 'action', 'query', 'patients', 'rows']),
  }
  const streams = Object.values(S)

  let patientId = 0
  let itemId = 0
  let scanId = 0
  let moveId = 0
  let serialNo = 0
  // stock lines, one per facility and lot, made on first use
  const lineOf = new Map<number, number>()
  const lineFac: number[] = [0]
  const lineLot: number[] = [0]
  const lineUses: number[] = [0]
  const lineFirst: number[] = [0]
  const lineLast: number[] = [0]

  const GS = '\u001D'
  const aimCheck = (it: Item) => `Set the aiming guide to ${Number(it.angle_deg)}°${it.side ? ` and ${it.side}` : ''}, the same as this nail.`
  const AIM_SOURCE = 'Technique guides (aiming arm matches the nail): from memory'
  const clamp = (x: number, lo: number, hi: number) => Math.max(lo, Math.min(hi, x))

  for (let c = 0; c < nCases; c++) {
    const caseId = c + 1
    const day = when[c]!
    const f = facilities[rCase.weighted(facilityWeights)]!
    const zone = f.zone
    const scheduled = startMs + Math.floor(day) * DAY + (450 + rCase.int(660)) * 60_000
    const created = scheduled - rCase.int(36 * 60) * 60_000
    const opened = scheduled + (5 + rCase.int(20)) * 60_000

    // patient: most are new; some come back (the other hip, a revision)
    let patient: number
    if (!f.patients.length || rCase.chance(0.8)) {
      patient = ++patientId
      f.patients.push(patient)
      const age = rCase.chance(0.05) ? rCase.range(25, 64) : clamp(Math.round(rCase.normal(83, 7)), 65, 102)
      const birth = isoDay(scheduled - age * 365.25 * DAY - rCase.int(365) * DAY)
      const sex = ['female', 'male', 'other', 'unknown'][rCase.weighted([68, 31.5, 0.2, 0.3])]!
      S.patients.row([patient, f.id, `${f.code}${pad(f.mrnNext++, 7)}`, esc(familyName(rCase)), esc(rCase.pick(GIVEN)), birth, sex, wall(created, zone)].join('\t'))
    } else {
      patient = rCase.pick(f.patients)
    }

    const long = isLong[c] === 1
    const side = rCase.chance(0.52) ? 'left' : 'right'
    const surgeon = rCase.pick(f.surgeons)
    const circulator = rCase.pick(f.circulators)
    const scrub = rCase.pick(f.scrubs)
    const theatre = rCase.pick(f.theatres)

    // the packs, in the order a nailing opens them
    const packs: { item: number; wasted?: 'wrong_size' | 'contaminated' }[] = []
    let nail: number
    if (long) {
      const angle = [125, 130][rCase.weighted([25, 75])]
      const d = [9, 10, 11, 12, 13][rCase.weighted([5, 30, 35, 20, 10])]
      const len = clamp(Math.round(rCase.normal(380, 25) / 20) * 20, 300, 460)
      nail = longNail.get(`${side}/${angle}/${d}/${len}`)!
    } else {
      const angle = [125, 130, 135][rCase.weighted([20, 70, 10])]
      const d = [10, 11, 12, 13][rCase.weighted([35, 40, 15, 10])]
      nail = shortNail.get(`${angle}/${d}/${[180, 200][rCase.weighted([75, 25])]}`)!
    }
    packs.push({ item: nail })
    const he = byLen.head_element.get(clamp(Math.round(rCase.normal(95, 7) / 5) * 5, 70, 120))!
    if (waste[c] === 2) packs.push({ item: he, wasted: 'contaminated' })
    packs.push({ item: he })
    if (hasSet[c]) packs.push({ item: setScrew })
    const depth = rCase.normal(38, 4)
    for (let k = 0; k < nDistal[c]!; k++) {
      const len = clamp(Math.round(rCase.normal(depth, 2) / 2) * 2, 26, 60)
      const ds = byLen.distal_screw.get(len)!
      if (k === 0 && waste[c] === 1) packs.push({ item: byLen.distal_screw.get(clamp(len + (rCase.chance(0.5) ? 2 : -2), 26, 60))!, wasted: 'wrong_size' })
      packs.push({ item: ds })
    }
    if (hasCap[c]) packs.push({ item: byLen.end_cap.get([0, 5, 10][rCase.weighted([50, 30, 20])]!)! })

    const ip = `192.0.2.${f.id}` // documentation range (RFC 5737): an address as data, never a destination
    let t = opened + (20 + rCase.int(20)) * 60_000
    const caseKey = rKey.uuid()
    S.audit.row([wall(created, zone), circulator, 'case.create', 'case', caseId,
      esc(JSON.stringify({ procedure: long ? 'long_nail' : 'short_nail', side, theatreId: theatre, surgeonId: surgeon })), ip].join('\t'))

    // now and then a pack is refused at the scan (expired), and kept as a scan event
    if (rCase.chance(0.015)) {
      const it = itemById.get(packs[0]!.item)!
      const old = lots.base.get(it.id)!
      scanId++
      const exp = lots.expiry[old]!
      const body = { result: 'refused', code: 'expired', message: `Expired ${exp} — do not open. Fetch another pack.`, source: "The implant's instructions for use", checks: [] }
      S.scans.row([scanId, caseId, rKey.uuid(), esc(`]d201${it.gtin}17${yymmdd(exp)}10${lots.code[old]}`), 'wedge', 'refused', 'expired', 422,
        esc(JSON.stringify(body)), NULL, scrub, wall(t - 60_000, zone)].join('\t'))
    }

    for (const p of packs) {
      const it = itemById.get(p.item)!
      const g = lots.pick(it.id, day, rLot)
      lots.uses[g]!++
      const lot = lots.code[g]!
      const expiry = lots.expiry[g]!
      const gtin = it.gtin
      const serial = it.kind === 'nail' ? `${it.nail_type === 'short' ? 'NS' : 'NL'}${pad(++serialNo, 8)}` : null
      const source = ['wedge', 'camera', 'photo', 'manual'][rCase.weighted([55, 38, 3, 4])]!
      const data = `01${gtin}17${yymmdd(expiry)}10${lot}${serial ? `${GS}21${serial}` : ''}`
      const raw = source === 'manual' ? NULL : esc(source === 'wedge' ? `]d2${data}` : `${GS}${data}`)
      const hri = source === 'manual' ? NULL : `(01)${gtin}(17)${yymmdd(expiry)}(10)${lot}${serial ? `(21)${serial}` : ''}`
      const by = rCase.chance(0.7) ? scrub : circulator
      const id = ++itemId

      const checks: { code: string; message: string; source?: string; needsAck: boolean }[] = []
      if (it.kind === 'nail') checks.push({ code: 'aiming_guide', needsAck: true, message: aimCheck(it), source: AIM_SOURCE })
      if (p.wasted === 'wrong_size') checks.push({ code: 'size_differs', needsAck: true, message: `Size ${Number(it.length_mm)} mm differs from the confirmed ${Number(it.length_mm) + 2} mm. Check with the surgeon.` })
      const acked = checks.length > 0
      const result = acked ? 'check' : 'accepted'

      const key = f.id * 1_000_000 + g
      let line = lineOf.get(key)
      if (line === undefined) {
        line = lineFac.length
        lineOf.set(key, line)
        lineFac.push(f.id); lineLot.push(g); lineUses.push(0); lineFirst.push(t); lineLast.push(t)
      }
      lineUses[line]!++
      lineLast[line] = t

      const clientKey = rKey.uuid()
      const disposition = p.wasted ? 'wasted' : 'implanted'
      S.items.row([id, caseId, it.id, raw, 'GS1', gtin, lot, serial ?? NULL, expiry, hri, source, disposition, p.wasted ?? NULL, NULL,
        esc(JSON.stringify(checks)), acked ? scrub : NULL, acked ? wall(t + 60_000, zone) : NULL, line, clientKey, by, wall(t, zone)].join('\t'))

      const first = checks[0]
      const response = {
        result, code: first?.code ?? null,
        message: result === 'accepted' ? `Accepted: ${it.description}, lot ${lot}${serial ? `, serial ${serial}` : ''}.` : first!.message,
        checks,
        item: { id, description: it.description, kind: it.kind, di: gtin, lot, serial, expiry, disposition },
      }
      S.scans.row([++scanId, caseId, clientKey, raw, source, result, first?.code ?? NULL, 201, esc(JSON.stringify(response)), id, by, wall(t, zone)].join('\t'))
      S.moves.row([++moveId, line, -1, p.wasted ? 'waste' : 'implant', id, by, wall(t, zone)].join('\t'))
      S.audit.row([wall(t, zone), by, 'item.add', 'case', caseId,
        esc(JSON.stringify({ caseItemId: id, itemId: it.id, di: gtin, lot, serial, disposition, source, result })), ip].join('\t'))
      if (acked) S.audit.row([wall(t + 60_000, zone), scrub, 'item.acknowledge', 'case', caseId, esc(JSON.stringify({ caseItemId: id, codes: checks.map((x) => x.code) })), ip].join('\t'))
      t += (3 + rCase.int(12)) * 60_000
    }

    // the last days before --end are still closed, not yet signed
    const recent = day > spanDays - 2
    const closed = t + (10 + rCase.int(30)) * 60_000
    S.audit.row([wall(closed, zone), circulator, 'case.close', 'case', caseId, '{}', ip].join('\t'))
    if (!recent) {
      let hash = ''
      for (let k = 0; k < 8; k++) hash += rKey.u32().toString(16).padStart(8, '0')
      S.audit.row([wall(closed + (5 + rCase.int(120)) * 60_000, zone), surgeon, 'record.sign', 'case', caseId, esc(JSON.stringify({ version: 1, recordHash: hash })), ip].join('\t'))
    }
    S.cases.row([caseId, f.id, theatre, patient, long ? 'long_nail' : 'short_nail', side, surgeon, circulator, scrub, wall(scheduled, zone),
      recent ? 'closed' : 'signed', f.id, caseKey, circulator, wall(created, zone), wall(opened, zone), wall(closed, zone)].join('\t'))

    // one case in ten is looked up later by its coordinator (trace search by one of its lots)
    if (rCase.chance(0.1)) {
      const q = { lot: lots.code[lots.pick(nail, day, rLot)], lotMatch: 'exact', serialMatch: 'exact', sort: 'date', dir: 'desc', page: 1, pageSize: 50 }
      S.phi.row([wall(closed + rCase.range(1, 400) * DAY, zone), f.coordinator, 'trace.search', esc(JSON.stringify(q)), 1 + rCase.int(40), 1 + rCase.int(60)].join('\t'))
    }

    if (c % 2000 === 1999 || c === nCases - 1) {
      for (const s of streams) await s.flush()
      if (c % 100_000 === 99_999) log('generate', `${c + 1} cases, ${itemId} items`)
    }
  }
  for (const s of streams) await s.end()

  // Shelf lines: received once (a movement), used as above; the newest lots still have packs on hand.
  const lines = new CopyStream(o.db, 'stock_lines', ['id', 'location_id', 'item_id', 'lot', 'expiry', 'on_hand', 'quarantined', 'updated_at'])
  const receives = new CopyStream(o.db, 'stock_movements', ['id', 'stock_line_id', 'delta', 'reason', 'moved_by', 'moved_at', 'client_key'])
  for (let l = 1; l < lineFac.length; l++) {
    const fac = facilities[lineFac[l]! - 1]!
    const g = lineLot[l]!
    const onHand = lots.isRecent(g) ? 1 + rCase.int(4) : 0
    lines.row([l, fac.core, lots.item[g], lots.code[g], lots.expiry[g], onHand, 'f', wall(lineLast[l]!, fac.zone)].join('\t'))
    receives.row([++moveId, l, lineUses[l]! + onHand, 'receive', fac.coordinator, wall(lineFirst[l]! - rCase.range(5, 40) * DAY, fac.zone), rKey.uuid()].join('\t'))
    if (l % 20_000 === 0) { await lines.flush(); await receives.flush() }
  }
  await lines.end()
  await receives.end()

  // A few recall notices on lots that were used (two still open).
  const recallRows: string[] = []
  const recallItemRows: string[] = []
  for (let k = 1; k <= 4; k++) {
    let g = rLot.int(lots.code.length)
    while (lots.uses[g] === 0) g = rLot.int(lots.code.length)
    const it = itemById.get(lots.item[g]!)!
    recallRows.push([k, esc(`Field safety notice ${k}: ${it.description}`), `FSN-B-${pad(k, 3)}`, 'II', esc(DEMO_MAKER.name), isoDay(endMs - (400 - k * 90) * DAY), k <= 2 ? 'closed' : 'open', 1].join('\t'))
    recallItemRows.push([k, k, it.gtin, lots.code[g]].join('\t'))
  }
  await small('recalls', ['id', 'title', 'notice_ref', 'fda_class', 'maker', 'received_on', 'status', 'created_by'], recallRows)
  await small('recall_items', ['id', 'recall_id', 'di', 'lot'], recallItemRows)
  log('generate', `rows loaded in ${((Date.now() - t0) / 1000).toFixed(0)} s; building indexes`)

  // The lots the lot-search benchmarks pick from: half uniform over used lots (a recall can name any lot),
  // half weighted by use (the lots of the packs a hospital opens most).
  const used: number[] = []
  for (let g = 0; g < lots.code.length; g++) if (lots.uses[g]! > 0) used.push(g)
  const chosen = new Set<number>()
  for (let tries = 0; chosen.size < Math.min(50, used.length) && tries < 10_000; tries++) chosen.add(rLot.pick(used))
  const cum: number[] = []
  let sum = 0
  for (const g of used) cum.push((sum += lots.uses[g]!))
  for (let tries = 0; chosen.size < Math.min(100, used.length) && tries < 10_000; tries++) {
    const x = rLot.next() * sum
    let lo = 0
    let hi = cum.length - 1
    while (lo < hi) { const mid = (lo + hi) >> 1; if (cum[mid]! > x) hi = mid; else lo = mid + 1 }
    chosen.add(used[lo]!)
  }

  const meta = await withClient(o.db, async (c) => {
    await c.query(`SET maintenance_work_mem = '1GB'`)
    for (const def of rebuild.indexes) await c.query(def)
    for (const def of rebuild.constraints) await c.query(def)
    // ids were given explicitly: move each identity sequence past them
    const ids = await c.query(`
      SELECT table_name FROM information_schema.columns
      WHERE table_schema = 'public' AND column_name = 'id' AND is_identity = 'YES'`)
    for (const r of ids.rows) {
      await c.query(`SELECT setval(pg_get_serial_sequence('${r.table_name}', 'id'), coalesce((SELECT max(id) FROM ${r.table_name}), 0) + 1, false)`)
    }
    await c.query(`CREATE TABLE bench_meta (key text PRIMARY KEY, value jsonb NOT NULL)`)
    await c.query(`CREATE TABLE bench_lots (n integer PRIMARY KEY, lot text NOT NULL, item_id integer NOT NULL, uses integer NOT NULL)`)
    let n = 0
    for (const g of chosen) await c.query(`INSERT INTO bench_lots VALUES ($1, $2, $3, $4)`, [++n, lots.code[g], lots.item[g], lots.uses[g]])
    const counts: Record<string, number> = {}
    const maxIds: Record<string, number> = {}
    for (const tbl of ['facilities', 'theatres', 'users', 'patients', 'cases', 'case_items', 'scan_events', 'stock_movements', 'stock_lines',
      'audit_log', 'phi_access_log', 'catalog_items', 'par_levels', 'recalls', 'readings', 'sizing_decisions', 'login_attempts', 'outbox', 'record_versions']) {
      const r = await c.query(`SELECT count(*)::int AS n, coalesce(max(id), 0)::bigint AS m FROM ${tbl}`)
      counts[tbl] = r.rows[0].n
      maxIds[tbl] = Number(r.rows[0].m)
    }
    const lotsUsed = await c.query(`SELECT count(DISTINCT lot)::int AS n FROM case_items`)
    const perItem = await c.query(`SELECT min(n)::int AS min, percentile_cont(0.5) WITHIN GROUP (ORDER BY n) AS median, max(n)::int AS max
      FROM (SELECT item_id, count(DISTINCT lot) AS n FROM case_items GROUP BY item_id) x`)
    const m = {
      complete: false, seed: o.seed, scale: o.scale, end: o.end, migrations: migrationNames(), counts, maxIds,
      lots: { distinct: lotsUsed.rows[0].n, perItem: { min: perItem.rows[0].min, median: Number(perItem.rows[0].median), max: perItem.rows[0].max } },
      sizeBytes: 0, seconds: 0,
    }
    await c.query(`INSERT INTO bench_meta VALUES ('dataset', $1)`, [JSON.stringify(m)])
    return m
  })

  log('generate', 'VACUUM ANALYZE')
  await withClient(o.db, async (c) => {
    await c.query(`SET maintenance_work_mem = '1GB'`)
    await c.query('VACUUM (ANALYZE)')
    await c.query('CHECKPOINT')
    const size = await c.query(`SELECT pg_database_size(current_database())::bigint AS s`)
    meta.sizeBytes = Number(size.rows[0].s)
    meta.seconds = Math.round((Date.now() - t0) / 1000)
    meta.complete = true
    await c.query(`UPDATE bench_meta SET value = $1 WHERE key = 'dataset'`, [JSON.stringify(meta)])
  })
  log('generate', `done in ${meta.seconds} s: ${meta.counts.cases} cases, ${meta.counts.case_items} items, ${meta.counts.patients} patients, ${(meta.sizeBytes / 2 ** 30).toFixed(2)} GiB`)
  return meta
}

if (import.meta.url === `file://${process.argv[1]}`) {
  generate(parseGenArgs(process.argv.slice(2))).catch((e) => {
    console.error(`[bench] generate failed: ${e instanceof Error ? e.message : e}`)
    process.exit(1)
  })
}
