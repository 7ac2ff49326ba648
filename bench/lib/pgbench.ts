// PostgreSQL's own figures for the two hot paths, with pgbench over loopback: what the database can do
// when nothing but a C client sits between it and the SQL the API sends.
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import path from 'node:path'
import type { Fixture } from './fixture'
import { PG_HOST, PG_PORT, PG_USER, pgBin, percentile, runAsync, WORK } from './env'
import { pgbenchScript, type CapturedSearch } from './trace-sql'

export interface PgbenchResult {
  clients: number; threads: number; seconds: number; protocol: string
  tps: number; transactions: number; failed: number
  latencyMs: { mean: number; p50: number; p95: number; p99: number; max: number }
  /** filled in by the harness: CPU ms per transaction of PostgreSQL (this database) and of pgbench */
  cpuMsPerTxn?: { postgres: number; pgbench: number }
  /** per-transaction latencies (ms), for pooling rounds; not written to the report */
  samples?: Float64Array
  rounds?: number
}

const stats = (s: Float64Array) => ({
  mean: s.reduce((a, b) => a + b, 0) / (s.length || 1), p50: percentile(s, 50), p95: percentile(s, 95), p99: percentile(s, 99), max: s[s.length - 1] ?? NaN,
})

/** Several rounds of the same run as one: latencies pooled, rate = all transactions over all seconds. */
export function poolPgbench(rs: PgbenchResult[]): PgbenchResult {
  const all = Float64Array.from(rs.flatMap((r) => [...(r.samples ?? [])])).sort()
  const secs = rs.reduce((a, r) => a + r.seconds, 0)
  const txns = rs.reduce((a, r) => a + r.transactions, 0)
  const cpu = rs.every((r) => r.cpuMsPerTxn) ? {
    postgres: rs.reduce((a, r) => a + r.cpuMsPerTxn!.postgres * r.transactions, 0) / txns,
    pgbench: rs.reduce((a, r) => a + r.cpuMsPerTxn!.pgbench * r.transactions, 0) / txns,
  } : undefined
  return { ...rs[0]!, seconds: secs, tps: txns / secs, transactions: txns, failed: rs.reduce((a, r) => a + r.failed, 0), latencyMs: stats(all), cpuMsPerTxn: cpu, rounds: rs.length, samples: all }
}

/** One pgbench run; latencies come from its per-transaction log (--log), not from its averages. */
export async function pgbench(db: string, name: string, scripts: string[], o: { clients: number; threads: number; seconds: number; defines?: Record<string, string | number> }): Promise<PgbenchResult> {
  const dir = path.join(WORK, 'pgbench', 'logs')
  mkdirp(dir)
  const prefix = path.join(dir, name)
  for (const f of existsSync(dir) ? readdirSync(dir) : []) if (f.startsWith(`${name}.`)) rmSync(path.join(dir, f))
  const args = ['-h', PG_HOST, '-p', String(PG_PORT), '-U', PG_USER, '-n', '-M', 'extended',
    '-c', String(o.clients), '-j', String(o.threads), '-T', String(o.seconds), '--log', `--log-prefix=${prefix}`,
    ...Object.entries(o.defines ?? {}).flatMap(([k, v]) => ['-D', `${k}=${v}`]),
    ...scripts.flatMap((s) => ['-f', `${s}@1`]), db]
  const out = await runAsync(pgBin('pgbench'), args)
  const num = (re: RegExp) => Number(out.match(re)?.[1] ?? NaN)
  const tps = num(/tps = ([\d.]+) \(without initial connection time\)/)
  const failed = num(/number of failed transactions: (\d+)/) || 0

  const lat: number[] = []
  for (const f of readdirSync(dir)) {
    if (!f.startsWith(`${name}.`)) continue
    for (const line of readFileSync(path.join(dir, f), 'utf8').split('\n')) {
      // client_id transaction_no time script_no time_epoch time_us: time is the latency in µs
      const us = Number(line.split(' ')[2])
      if (Number.isFinite(us) && line) lat.push(us / 1000)
    }
  }
  if (!lat.length) throw new Error(`pgbench ${name} logged no transactions:\n${out}`)
  const s = Float64Array.from(lat).sort()
  return {
    clients: o.clients, threads: o.threads, seconds: o.seconds, protocol: 'extended',
    tps, transactions: lat.length, failed, latencyMs: stats(s), samples: s,
  }
}

/** One script per lot: requireRole's user check, then the captured search and PHI-log statements. */
export function writeSearchScripts(searches: CapturedSearch[], userId: number): string[] {
  const dir = path.join(WORK, 'pgbench', 'search')
  rmSync(dir, { recursive: true, force: true })
  const files: string[] = []
  searches.forEach((s, i) => {
    const f = path.join(dir, `lot-${String(i + 1).padStart(3, '0')}.sql`)
    const body = `-- GET /api/trace?lot=${s.lot}\nselect "active", "role", "sessions_valid_after" from "users" where "id" = ${userId};\n${pgbenchScript(s.statements)}`
    mkdirp(dir)
    writeFileSync(f, body)
    files.push(f)
  })
  return files
}

function mkdirp(d: string) {
  mkdirSync(d, { recursive: true })
}

/**
 * POST /api/cases/:id/items as PostgreSQL sees it, statement for statement (server/api/cases/[id]/items/
 * index.post.ts with requireRole, loadCase, itemByDi, recallsFor, shelfLineFor, noteLowStock, writeAudit,
 * notifyLive), checked against the statement log of a real request. pgbench variables hold numbers only,
 * so the per-request strings (client key, serial, the case's lot, JSON) are built in SQL from numbers;
 * the values, tables and plans are those of the API.
 */
export const INGEST_SCRIPT = String.raw`
\set k :client_id % :ncases
\set case_id :case0 + :k
\set fac :fac0 + :k / :per
\set actor :scrub0 + (:k / :per) * :ustride
\set n :lotno0 + :k
\set h1 random(0, 1152921504606846975)
\set h2 random(0, 1152921504606846975)
\set s random(1, 999999999999)
select "active", "role", "sessions_valid_after" from "users" where "id" = :actor;
select "case_id", "status_code", "response" from "scan_events" where "client_key" = (lpad(to_hex(:h1::bigint), 16, '0') || lpad(to_hex(:h2::bigint), 16, '0'))::uuid;
select * from "cases" where "id" = :case_id and "facility_id" = :fac;
select "time_zone", "gs_substitute" from "facilities" where "id" = :fac;
begin;
select * from "cases" where "id" = :case_id and "facility_id" = :fac for update;
select "status_code", "response" from "scan_events" where "client_key" = (lpad(to_hex(:h1::bigint), 16, '0') || lpad(to_hex(:h2::bigint), 16, '0'))::uuid;
select * from "catalog_items" where "gtin" = :gtin \gset cat_
select "case_id" from "case_items" where "di" = :gtin and "serial" = ('PB' || :s::text) and "disposition" in ('implanted', 'wasted');
select "d"."id", "d"."slot", "ci"."kind", "ci"."description", "ci"."diameter_mm", "ci"."length_mm", "ci"."angle_deg", "ci"."side" from "sizing_decisions" as "d" inner join "catalog_items" as "ci" on "ci"."id" = "d"."chosen_item_id" where "d"."case_id" = :case_id and "d"."component" = 'nail' order by "d"."id";
select "r"."id", "r"."title", "r"."notice_ref" from "recall_items" as "ri" inner join "recalls" as "r" on "r"."id" = "ri"."recall_id" where "r"."status" = 'open' and "ri"."di" = :gtin and (("ri"."lot" is null or "ri"."lot" = (:lotprefix || lpad(:n::text, 4, '0') || 'N')) and ("ri"."serial" is null or "ri"."serial" = ('PB' || :s::text)) and ("ri"."expiry_from" is null or "ri"."expiry_from" <= :expiry) and ("ri"."expiry_to" is null or "ri"."expiry_to" >= :expiry));
select "sl"."id", "sl"."on_hand", "sl"."quarantined", "sl"."lot" from "stock_lines" as "sl" inner join "stock_locations" as "loc" on "loc"."id" = "sl"."location_id" where "loc"."facility_id" = :fac and "sl"."item_id" = :cat_id and coalesce(sl.lot, '') = (:lotprefix || lpad(:n::text, 4, '0') || 'N') order by sl.on_hand > 0 desc, "sl"."id" for update of "sl" \gset sl_
insert into "case_items" ("case_id", "item_id", "raw_scan", "issuer", "di", "lot", "serial", "expiry", "manufactured", "hri", "source", "disposition", "waste_reason", "waste_note", "checks", "stock_line_id", "client_key", "recorded_by") values (:case_id, :cat_id, (']d201' || :gtin || '17' || :yymmdd || '10' || :lotprefix || lpad(:n::text, 4, '0') || 'N' || chr(29) || '21PB' || :s::text), 'GS1', :gtin, (:lotprefix || lpad(:n::text, 4, '0') || 'N'), ('PB' || :s::text), :expiry, NULL, ('(01)' || :gtin || '(17)' || :yymmdd || '(10)' || :lotprefix || lpad(:n::text, 4, '0') || 'N(21)PB' || :s::text), 'wedge', 'implanted', NULL, NULL, :checks, :sl_id, (lpad(to_hex(:h1::bigint), 16, '0') || lpad(to_hex(:h2::bigint), 16, '0'))::uuid, :actor) returning "id", "recorded_at" \gset ci_
WITH line AS (UPDATE stock_lines SET on_hand = on_hand - 1, updated_at = now() WHERE id = :sl_id RETURNING id) INSERT INTO stock_movements (stock_line_id, delta, reason, case_item_id, moved_by) SELECT id, -1, 'implant', :ci_id, :actor FROM line;
select "loc"."id" as "location_id", "loc"."name" as "location", "loc"."facility_id", "ci"."id" as "item_id", "ci"."description", "par"."par", (SELECT coalesce(sum(x.on_hand), 0)::int FROM stock_lines x WHERE x.item_id = sl.item_id AND x.location_id = sl.location_id AND NOT x.quarantined) as "on_hand" from "stock_lines" as "sl" inner join "stock_locations" as "loc" on "loc"."id" = "sl"."location_id" inner join "catalog_items" as "ci" on "ci"."id" = "sl"."item_id" inner join "par_levels" as "par" on "par"."item_id" = "sl"."item_id" and "par"."location_id" = "sl"."location_id" where "sl"."id" = :sl_id;
insert into "audit_log" ("actor_id", "action", "entity", "entity_id", "details", "ip") values (:actor, 'item.add', 'case', :case_id::text, jsonb_build_object('caseItemId', :ci_id::bigint, 'itemId', :cat_id::int, 'di', :gtin::text, 'lot', (:lotprefix || lpad(:n::text, 4, '0') || 'N'), 'serial', ('PB' || :s::text), 'disposition', 'implanted', 'source', 'wedge', 'result', 'check'), '127.0.0.1');
insert into "scan_events" ("case_id", "client_key", "raw", "source", "result", "code", "status_code", "response", "case_item_id", "scanned_by") values (:case_id, (lpad(to_hex(:h1::bigint), 16, '0') || lpad(to_hex(:h2::bigint), 16, '0'))::uuid, (']d201' || :gtin || '17' || :yymmdd || '10' || :lotprefix || lpad(:n::text, 4, '0') || 'N' || chr(29) || '21PB' || :s::text), 'wedge', 'check', 'aiming_guide', 201, jsonb_build_object('result', 'check', 'code', 'aiming_guide', 'message', :message::text, 'checks', :checks::jsonb, 'item', jsonb_build_object('id', :ci_id::bigint, 'description', :cat_description::text, 'kind', 'nail', 'di', :gtin::text, 'lot', (:lotprefix || lpad(:n::text, 4, '0') || 'N'), 'serial', ('PB' || :s::text), 'expiry', :expiry::text, 'disposition', 'implanted')), :ci_id, :actor);
select pg_notify('isthmus_events', '{"caseId":' || :case_id::text || ',"kind":"item","id":' || :ci_id::text || '}');
commit;
`

/** The numbers the ingest script derives its per-client values from; checks the fixture has that shape. */
export function ingestDefines(fx: Fixture, benchUserStride: number, perFacility: number): Record<string, string | number> {
  const c0 = fx.cases[0]!
  fx.cases.forEach((c, k) => {
    const ok = c.caseId === c0.caseId + k && c.facilityId === c0.facilityId + Math.floor(k / perFacility)
      && c.scrubId === c0.scrubId + Math.floor(k / perFacility) * benchUserStride && c.lot.endsWith(`${String(k + 1).padStart(4, '0')}N`)
    if (!ok) throw new Error(`fixture case ${k} does not follow the layout the pgbench ingest script assumes`)
  })
  const message = 'Set the aiming guide to 130°, the same as this nail.'
  const checks = JSON.stringify([{ code: 'aiming_guide', needsAck: true, message, source: 'Technique guides (aiming arm matches the nail): from memory' }])
  return {
    ncases: fx.cases.length, case0: c0.caseId, fac0: c0.facilityId, per: perFacility, scrub0: c0.scrubId, ustride: benchUserStride, lotno0: 1,
    lotprefix: c0.lot.slice(0, 4), gtin: fx.gtin, expiry: c0.expiry, yymmdd: c0.expiry.slice(2, 4) + c0.expiry.slice(5, 7) + c0.expiry.slice(8, 10),
    checks, message,
  }
}

export function writeIngestScript(): string {
  const f = path.join(WORK, 'pgbench', 'ingest.sql')
  mkdirp(path.dirname(f))
  writeFileSync(f, INGEST_SCRIPT.trimStart())
  return f
}
