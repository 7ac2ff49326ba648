// Per-run state on top of the generated data: first back to exactly what the generator loaded (every row
// a previous run or part added goes), then today's open cases the ingest benchmarks scan into.
import type pg from 'pg'
import { withClient } from './env'

export const BENCH_CASES_PER_FACILITY = 3
export interface BenchCase {
  caseId: number; facilityId: number; facilityCode: string; lot: string; gtin: string; expiry: string; lineId: number
  scrubId: number; scrubEmail: string; circulatorEmail: string
}
export interface Fixture { cases: BenchCase[]; nailItemId: number; gtin: string }

// Tables the app writes to during the benchmark, children before parents. The generator's max ids in
// bench_meta mark where its rows end.
const ADDED = ['recall_patients', 'recall_stock', 'stock_movements', 'scan_events', 'case_items', 'sizing_decisions', 'readings',
  'record_versions', 'outbox', 'audit_log', 'phi_access_log', 'login_attempts', 'stock_lines', 'cases', 'patients']

/** Wait (bounded) until no other session on `db` is inside a statement or transaction. */
export function waitIdle(db: string) {
  return withClient(db, (c) => quiesce(c, db))
}

async function quiesce(c: pg.Client, db: string) {
  for (let i = 0; i < 300; i++) {
    const r = await c.query(`SELECT count(*)::int AS n FROM pg_stat_activity
      WHERE datname = $1 AND pid <> pg_backend_pid() AND state <> 'idle' AND backend_type = 'client backend'`, [db])
    if (r.rows[0].n === 0) return
    await new Promise((res) => setTimeout(res, 100))
  }
  throw new Error(`other sessions on ${db} stayed busy for 30 s`)
}

export async function resetToGenerated(db: string): Promise<number> {
  for (let attempt = 1; ; attempt++) {
    try {
      return await resetOnce(db)
    } catch (e) {
      // a request still finishing can deadlock with the deletes; wait and go again
      if ((e as { code?: string }).code !== '40P01' || attempt >= 5) throw e
      await new Promise((res) => setTimeout(res, 1000))
    }
  }
}

async function resetOnce(db: string): Promise<number> {
  return withClient(db, async (c) => {
    const meta = (await c.query(`SELECT value FROM bench_meta WHERE key = 'dataset'`)).rows[0]?.value
    if (!meta?.complete) throw new Error(`${db} has no complete generated dataset (run bench/generate.ts)`)
    let removed = 0
    await quiesce(c, db)
    await c.query('BEGIN')
    // replica: no FK checks on delete (scan_events.case_item_id has no index: each check would scan it),
    // and the signed-case triggers stay quiet; the order above keeps references whole
    await c.query('SET LOCAL session_replication_role = replica')
    for (const t of ADDED) {
      const max = meta.maxIds[t] ?? 0
      const r = await c.query(`DELETE FROM ${t} WHERE id > $1`, [max])
      removed += r.rowCount ?? 0
    }
    // bench cases may have opened, historic lines are never touched; stock of fixture lines goes with them
    await c.query('COMMIT')
    if (removed > 0) {
      // plain VACUUM: dead rows go, planner statistics stay as the generator left them
      for (const t of ADDED) await c.query(`VACUUM ${t}`)
    }
    return removed
  })
}

async function q<T = any>(c: pg.Client, text: string, params: unknown[] = []): Promise<T[]> {
  return (await c.query(text, params)).rows as T[]
}

/** Three open short-nail cases per facility for today, each with its own lot on its own shelf line. */
export async function makeFixture(db: string): Promise<Fixture> {
  return withClient(db, async (c) => {
    const [nail] = await q(c, `SELECT id, gtin FROM catalog_items WHERE kind = 'nail' AND nail_type = 'short'
      AND diameter_mm = 11 AND length_mm = 180 AND angle_deg = 130`)
    if (!nail) throw new Error('the catalog has no 11 × 180 mm 130° short nail')
    const facilities = await q(c, `SELECT f.id, f.code, f.time_zone,
        (SELECT id FROM stock_locations WHERE facility_id = f.id AND code = 'CORE') AS core,
        (SELECT id FROM rule_profiles WHERE facility_id = f.id ORDER BY version DESC LIMIT 1) AS profile,
        (SELECT id FROM theatres WHERE facility_id = f.id ORDER BY id LIMIT 1) AS theatre
      FROM facilities f ORDER BY f.id`)
    const cases: BenchCase[] = []
    await c.query('BEGIN')
    const today = (await q(c, `SELECT to_char(now(), 'YY') AS yy, to_char(now() + interval '3 years', 'YYYY-MM-DD') AS expiry`))[0]
    let n = 0
    for (const f of facilities) {
      const code = String(f.code).toLowerCase()
      const people = await q(c, `SELECT role, id, email FROM users WHERE email = ANY($1)`,
        [['scrub', 'circulator', 'surgeon'].map((r) => `${r}.${code}@bench.isthmus.test`)])
      const who = Object.fromEntries(people.map((p) => [p.role, p]))
      if (!who.scrub || !who.circulator || !who.surgeon) throw new Error(`bench users for ${f.code} are missing`)
      for (let k = 0; k < BENCH_CASES_PER_FACILITY; k++) {
        n++
        const [p] = await q(c, `INSERT INTO patients (facility_id, mrn, family_name, given_name, birth_date, sex)
          VALUES ($1, $2, 'Benchmark-Patient', 'Fixture', '1940-02-29', 'female') RETURNING id`, [f.id, `${f.code}-BENCH-${n}`])
        const [cs] = await q(c, `INSERT INTO cases (facility_id, theatre_id, patient_id, procedure, side, surgeon_id, circulator_id, scrub_id,
            scheduled_at, status, rule_profile_id, created_by, opened_at)
          VALUES ($1, $2, $3, 'short_nail', 'left', $4, $5, $6, now() - interval '30 minutes', 'open', $7, $5, now() - interval '20 minutes') RETURNING id`,
          [f.id, f.theatre, p.id, who.surgeon.id, who.circulator.id, who.scrub.id, f.profile])
        // the nail is confirmed, so a scan runs every check and lands as 'check' (the aiming-guide reminder)
        await c.query(`INSERT INTO sizing_decisions (case_id, component, slot, proposed_item_id, chosen_item_id, engine, rule_profile_id, guide_acknowledged, decided_by)
          VALUES ($1, 'nail', 0, $2, $2, '{}', $3, true, $4)`, [cs.id, nail.id, f.profile, who.surgeon.id])
        // a lot of its own per case (no two clients wait on one shelf row) and deep enough that every
        // request in the run decrements it, so each one does the whole write
        const lot = `FB${today.yy}${String(n).padStart(4, '0')}N`
        const [line] = await q(c, `INSERT INTO stock_lines (location_id, item_id, lot, expiry, on_hand) VALUES ($1, $2, $3, $4, 1000000) RETURNING id`,
          [f.core, nail.id, lot, today.expiry])
        cases.push({
          caseId: cs.id, facilityId: f.id, facilityCode: f.code, lot, gtin: nail.gtin, expiry: today.expiry, lineId: line.id,
          scrubId: who.scrub.id, scrubEmail: who.scrub.email, circulatorEmail: who.circulator.email,
        })
      }
    }
    await c.query('COMMIT')
    return { cases, nailItemId: nail.id, gtin: nail.gtin }
  })
}
