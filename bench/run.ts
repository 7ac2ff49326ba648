/**
 * The benchmark: data, PostgreSQL baselines and API load, client, PDF. Usually started by bench/run.sh.
 *
 *   tsx bench/run.ts [--smoke] [--regenerate] [--scale N] [--seed S] [--seconds N] [--rounds N] [--db NAME] [--out DIR]
 *
 * Full run: isthmus_bench at scale 1, 30 s per path and load level; writes bench/REPORT.md and report.json.
 * --smoke: isthmus_bench_smoke at scale 0.001, 2 s per level; writes bench/.cache/smoke/ and prints
 * "bench smoke: ok" when every part produced its figures (targets are reported, never asserted).
 *
 * pgbench and the API take turns in rounds (pgbench, API, pgbench, API, …) and each side's rounds are
 * pooled: on a machine other work shares, both then meet the same spells of load.
 */
import { execFileSync } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import { mkdirSync, writeFileSync } from 'node:fs'
import path from 'node:path'
import { Client } from '../tests/helpers/http'
import { BENCH_PASSWORD, generate, GROUP_COORDINATOR } from './generate'
import { ingestLoad, lotSearchLoad, poolApi, signIn, startBenchServer, type ApiResult, type Session } from './lib/api'
import { clientFigures } from './lib/client'
import { BENCH, log, percentile, ROOT, runAsync, withClient } from './lib/env'
import { BENCH_CASES_PER_FACILITY, makeFixture, resetToGenerated, waitIdle, type Fixture } from './lib/fixture'
import { profileDuring } from './lib/inspect'
import { CpuMeter, describeMachine, LoadSampler } from './lib/machine'
import { INGEST_SCRIPT, ingestDefines, pgbench, poolPgbench, writeIngestScript, writeSearchScripts, type PgbenchResult } from './lib/pgbench'
import { summarizeProfile } from './lib/profile'
import { captureTraceSearches, type SessionUser } from './lib/trace-sql'
import { evaluateTargets, renderMarkdown } from './report'

interface Mode {
  smoke: boolean; db: string; scale: number; seed: string; regenerate: boolean; rounds: number
  seconds: number; warmSeconds: number; profileSeconds: number; pdfRuns: number; loads: number; searchLevels: number[]; ingestClients: number; out: string
}

function parseArgs(argv: string[]): Mode {
  const smoke = argv.includes('--smoke')
  const m: Mode = {
    smoke, db: smoke ? 'isthmus_bench_smoke' : 'isthmus_bench', scale: smoke ? 0.001 : 1, seed: 'isthmus-bench-1',
    regenerate: argv.includes('--regenerate'), rounds: smoke ? 1 : 3, seconds: smoke ? 2 : 30, warmSeconds: smoke ? 0 : 5,
    profileSeconds: smoke ? 1 : 10, pdfRuns: smoke ? 1 : 40, loads: smoke ? 1 : 7, searchLevels: smoke ? [10] : [1, 10], ingestClients: 50,
    out: smoke ? path.join(BENCH, '.cache/smoke') : BENCH,
  }
  for (let i = 0; i < argv.length; i++) {
    const v = () => argv[++i] ?? ''
    switch (argv[i]) {
      case '--scale': m.scale = Number(v()); break
      case '--seed': m.seed = v(); break
      case '--seconds': m.seconds = Number(v()); break
      case '--rounds': m.rounds = Math.max(1, Number(v())); break
      case '--db': m.db = v(); break
      case '--out': m.out = path.resolve(v()); break
      case '--smoke': case '--regenerate': break
      default: throw new Error(`unknown option ${argv[i]} (see bench/run.ts)`)
    }
  }
  return m
}

const strip = <T extends { samples?: unknown }>(r: T): Omit<T, 'samples'> => {
  const { samples: _, ...rest } = r
  return rest
}

async function main() {
  const m = parseArgs(process.argv.slice(2))
  const started = new Date()
  const sampler = new LoadSampler(m.db)
  const loadSpans: Record<string, ReturnType<LoadSampler['span']>> = {}
  const part = async <T>(name: string, fn: () => Promise<T>): Promise<T> => {
    const t0 = Date.now()
    log(name, 'start')
    const r = await fn()
    sampler.sample()
    loadSpans[name] = sampler.span(t0, Date.now())
    log(name, `done in ${((Date.now() - t0) / 1000).toFixed(1)} s`)
    return r
  }
  const roundSeconds = Math.max(1, Math.round(m.seconds / m.rounds))

  // CPU per transaction or request for PostgreSQL (this database), the load generator and the server
  const meteredPg = async (fn: () => Promise<PgbenchResult>): Promise<PgbenchResult> => {
    const meter = new CpuMeter(m.db)
    const r = await fn()
    const c = meter.stop()
    return { ...r, cpuMsPerTxn: { postgres: c.postgresMs / r.transactions, pgbench: c.childrenMs / r.transactions } }
  }
  const meteredApi = async (serverPid: number, fn: () => Promise<ApiResult>): Promise<ApiResult> => {
    const meter = new CpuMeter(m.db, [serverPid])
    const r = await fn()
    await waitIdle(m.db) // requests still in flight finish on the server's and PostgreSQL's clock too
    const c = meter.stop()
    const n = r.requests || 1
    return { ...r, cpuMsPerRequest: { postgres: c.postgresMs / n, server: (c.pidsMs[serverPid] ?? 0) / n, autocannon: c.harnessMs / n } }
  }

  // 1. data
  const dataset = await part('generate', () => generate({ db: m.db, scale: m.scale, seed: m.seed, end: '2026-11-30', force: m.regenerate }))
  const machine = await describeMachine(m.db)

  // 2. per-run state, and the searches' SQL from the app's own query code
  await resetToGenerated(m.db)
  let fx: Fixture = await makeFixture(m.db)
  const { coordinator, lots } = await withClient(m.db, async (c) => {
    const u = (await c.query(`SELECT id, name, email, role, facility_id FROM users WHERE email = $1`, [GROUP_COORDINATOR])).rows[0]
    if (!u) throw new Error(`${GROUP_COORDINATOR} is missing from ${m.db}`)
    const l = (await c.query(`SELECT lot FROM bench_lots ORDER BY n`)).rows.map((r) => r.lot as string)
    return { coordinator: { id: u.id, name: u.name, email: u.email, role: u.role, facilityId: u.facility_id, facilityName: null } as SessionUser, lots: l }
  })
  const searches = await captureTraceSearches(m.db, coordinator, lots)
  const totals = searches.map((s) => s.total).sort((a, b) => a - b)
  const lotSample = { lots: lots.length, rowsPerLot: { min: totals[0], median: percentile(totals, 50), p90: percentile(totals, 90), max: totals[totals.length - 1] } }
  const searchFiles = writeSearchScripts(searches, coordinator.id)
  const ingestFile = writeIngestScript()
  // the plan of the heaviest search in the set, for the report
  const heaviest = searches.reduce((a, b) => (b.total > a.total ? b : a))
  const plan = await withClient(m.db, async (c) => {
    const st = heaviest.statements[0]!
    const r = await c.query(`EXPLAIN (ANALYZE, BUFFERS, FORMAT JSON) ${st.sql}`, st.parameters as unknown[])
    const top = r.rows[0]['QUERY PLAN'][0]
    const nodes: string[] = []
    const walk = (n: any, depth: number) => {
      nodes.push(`${'  '.repeat(depth)}${n['Node Type']}${n['Index Name'] ? ` using ${n['Index Name']}` : n['Relation Name'] ? ` on ${n['Relation Name']}` : ''} (rows ${n['Actual Rows']}, loops ${n['Actual Loops']})`)
      for (const k of n.Plans ?? []) walk(k, depth + 1)
    }
    walk(top.Plan, 0)
    return { lot: heaviest.lot, rows: heaviest.total, planningMs: top['Planning Time'], executionMs: top['Execution Time'], sharedHit: top.Plan['Shared Hit Blocks'], sharedRead: top.Plan['Shared Read Blocks'], nodes }
  })

  // 3. PostgreSQL and the API, taking turns. The inspector listens on loopback for the profile windows;
  // until a session attaches it costs nothing.
  const server = await startBenchServer(m.db, ['--inspect=127.0.0.1:0'])
  const pid = server.pid
  const pgSearch: Record<number, PgbenchResult> = {}
  const apiSearch: Record<number, ApiResult> = {}
  const diagnostics: Record<string, PgbenchResult> = {}
  const serverProfile: Record<string, any> = {}
  let pgIngest: PgbenchResult
  let apiIngest: ApiResult
  let ingestRows = 0
  let client: Awaited<ReturnType<typeof clientFigures>>
  const countBench = () => withClient(m.db, async (c) => (await c.query(`SELECT count(*)::int AS n FROM case_items WHERE lot LIKE 'FB%'`)).rows[0].n as number)
  // where the server's CPU goes under a load: a short extra window with the profiler on (it costs a
  // little, so these give shares, not figures)
  const profileWindow = async (name: string, load: () => Promise<ApiResult>) => {
    if (!m.profileSeconds) return
    try {
      if (!server.inspector) throw new Error('the server named no inspector address')
      const { result, profile } = await profileDuring(server.inspector, load)
      serverProfile[name] = { requests: result.requests, ...summarizeProfile(profile, { skipIdle: true, top: 10 }) }
    } catch (e) {
      serverProfile[name] = { error: e instanceof Error ? e.message : String(e) }
    }
  }
  try {
    await part('lot search', async () => {
      const coord = await signIn(server.url, GROUP_COORDINATOR, BENCH_PASSWORD)
      for (const c of m.searchLevels) {
        const threads = Math.min(2, c)
        if (m.warmSeconds) {
          await pgbench(m.db, `warm-search-${c}`, searchFiles, { clients: c, threads, seconds: m.warmSeconds })
          await lotSearchLoad(server.url, coord, lots, c, m.warmSeconds)
        }
        const pg: PgbenchResult[] = []
        const api: ApiResult[] = []
        for (let k = 1; k <= m.rounds; k++) {
          pg.push(await meteredPg(() => pgbench(m.db, `search-${c}-${k}`, searchFiles, { clients: c, threads, seconds: roundSeconds })))
          api.push(await meteredApi(pid, () => lotSearchLoad(server.url, coord, lots, c, roundSeconds, pid)))
        }
        pgSearch[c] = poolPgbench(pg)
        apiSearch[c] = poolApi(api)
        log('lot search', `${c} clients: pgbench ${pgSearch[c]!.tps.toFixed(0)} tps, p50 ${pgSearch[c]!.latencyMs.p50.toFixed(2)} ms, p95 ${pgSearch[c]!.latencyMs.p95.toFixed(2)} ms; ` +
          `API ${apiSearch[c]!.rps.toFixed(0)} req/s, p50 ${apiSearch[c]!.latencyMs.p50.toFixed(2)} ms, p95 ${apiSearch[c]!.latencyMs.p95.toFixed(2)} ms, non-2xx ${apiSearch[c]!.non2xx}`)
      }
      await profileWindow('search', () => lotSearchLoad(server.url, coord, lots, 10, m.profileSeconds))
    })

    await part('scan ingest', async () => {
      await resetToGenerated(m.db)
      fx = await makeFixture(m.db)
      const defines = ingestDefines(fx, 5, BENCH_CASES_PER_FACILITY)
      const sessions = new Map<number, Session>()
      for (const c of fx.cases) if (!sessions.has(c.facilityId)) sessions.set(c.facilityId, await signIn(server.url, c.scrubEmail, BENCH_PASSWORD))
      if (m.warmSeconds) {
        await pgbench(m.db, 'warm-ingest', [ingestFile], { clients: m.ingestClients, threads: 2, seconds: m.warmSeconds, defines })
        await ingestLoad(server.url, sessions, fx.cases, m.ingestClients, m.warmSeconds)
      }
      const pg: PgbenchResult[] = []
      const api: ApiResult[] = []
      for (let k = 1; k <= m.rounds; k++) {
        pg.push(await meteredPg(() => pgbench(m.db, `ingest-${k}`, [ingestFile], { clients: m.ingestClients, threads: 2, seconds: roundSeconds, defines })))
        await waitIdle(m.db)
        const before = await countBench()
        api.push(await meteredApi(pid, () => ingestLoad(server.url, sessions, fx.cases, m.ingestClients, roundSeconds, pid)))
        // every 201 must have left its row (a scan is never silently lost); rows also come from requests
        // still in flight when the load stopped, which meteredApi waited for
        ingestRows += (await countBench()) - before
      }
      pgIngest = poolPgbench(pg)
      apiIngest = poolApi(api)
      log('scan ingest', `${m.ingestClients} clients: pgbench ${pgIngest.tps.toFixed(0)} tps, p95 ${pgIngest.latencyMs.p95.toFixed(1)} ms; ` +
        `API ${apiIngest.rps.toFixed(0)} req/s, p95 ${apiIngest.latencyMs.p95.toFixed(1)} ms, non-2xx ${apiIngest.non2xx}, errors ${apiIngest.errors}, timeouts ${apiIngest.timeouts}`)
      await profileWindow('ingest', () => ingestLoad(server.url, sessions, fx.cases, m.ingestClients, m.profileSeconds))

      // A diagnostic, not a target: the same transaction without NOTIFY (PostgreSQL serialises the
      // commits of all transactions that notified), to show what live updates cost the database.
      const noNotify = INGEST_SCRIPT.trimStart().replace(/^select pg_notify.*$/m, '')
      if (noNotify === INGEST_SCRIPT.trimStart()) throw new Error('the ingest script no longer has the NOTIFY the diagnostic removes')
      const variants = m.smoke ? [] : [['no-notify', noNotify]] as const
      for (const [name, text] of variants) {
        const f = ingestFile.replace(/ingest\.sql$/, `${name}.sql`)
        writeFileSync(f, text)
        await resetToGenerated(m.db)
        const dfx = await makeFixture(m.db)
        const d = ingestDefines(dfx, 5, BENCH_CASES_PER_FACILITY)
        // taking turns with the app's own transaction, like above, so the comparison is like for like
        const asIs: PgbenchResult[] = []
        const variant: PgbenchResult[] = []
        for (let k = 1; k <= m.rounds; k++) {
          asIs.push(await meteredPg(() => pgbench(m.db, `diag-as-is-${k}`, [ingestFile], { clients: m.ingestClients, threads: 2, seconds: Math.max(2, Math.round(roundSeconds / 2)), defines: d })))
          variant.push(await meteredPg(() => pgbench(m.db, `diag-${name}-${k}`, [f], { clients: m.ingestClients, threads: 2, seconds: Math.max(2, Math.round(roundSeconds / 2)), defines: d })))
        }
        diagnostics[name] = { ...poolPgbench(variant), asIs: strip(poolPgbench(asIs)) } as PgbenchResult
        log('scan ingest', `diagnostic ${name}: ${diagnostics[name]!.tps.toFixed(0)} tps vs ${poolPgbench(asIs).tps.toFixed(0)} as the app does it`)
      }
    })

    // 4. client: fresh cases again (the ingest left thousands of items on each), a few packs scanned in
    await resetToGenerated(m.db)
    fx = await makeFixture(m.db)
    const bc = fx.cases[0]!
    const scrub = new Client(server.url)
    await scrub.login(bc.scrubEmail, BENCH_PASSWORD)
    const exp = bc.expiry.slice(2, 4) + bc.expiry.slice(5, 7) + bc.expiry.slice(8, 10)
    for (let i = 0; i < 3; i++) {
      const r = await scrub.post(`/api/cases/${bc.caseId}/items`, { scan: `]d201${bc.gtin}17${exp}10${bc.lot}\u001D21UI${i}${Date.now() % 1e8}`, source: 'wedge', disposition: 'implanted', clientKey: randomUUID() })
      if (r.status !== 201) throw new Error(`fixture scan failed: ${r.status} ${JSON.stringify(r.body)}`)
    }
    client = await part('client', () => clientFigures(server.url, bc.circulatorEmail, BENCH_PASSWORD,
      [`/cases/${bc.caseId}`, `/cases/${bc.caseId}/sizes`, `/cases/${bc.caseId}/implants`], m.loads, m.smoke ? 0 : 3))
  } catch (e) {
    // the server's own words help more than a status code
    console.error(`[bench] server output (last lines):\n${server.output().slice(-3000)}`)
    throw e
  } finally {
    await server.stop()
  }

  // 5. PDF, in a process of its own (nothing else in its heap)
  const pdf = await part('pdf', async () => {
    const out = await runAsync('npx', ['tsx', 'bench/pdf.ts', '--runs', String(m.pdfRuns), '--warm', m.smoke ? '0' : '5', '--profile', m.smoke ? '0' : '10'])
    const line = out.split('\n').find((l) => l.startsWith('{'))
    if (!line) throw new Error(`bench/pdf.ts printed no figures:\n${out}`)
    return JSON.parse(line)
  })

  await resetToGenerated(m.db)
  sampler.stop()

  const ratio = (a: number, b: number) => (b > 0 ? a / b : NaN)
  const report = {
    generatedAt: new Date().toISOString(), startedAt: started.toISOString(), mode: m.smoke ? 'smoke' : 'full',
    commit: gitInfo(), machine,
    dataset: { db: m.db, scale: m.scale, seed: m.seed, counts: dataset.counts, lots: dataset.lots, sizeBytes: dataset.sizeBytes, generateSeconds: dataset.seconds },
    lotSample, heaviestSearchPlan: plan,
    lotSearch: m.searchLevels.map((c) => ({
      clients: c, pgbench: strip(pgSearch[c]!), api: strip(apiSearch[c]!),
      ratio: { p50: ratio(apiSearch[c]!.latencyMs.p50, pgSearch[c]!.latencyMs.p50), p95: ratio(apiSearch[c]!.latencyMs.p95, pgSearch[c]!.latencyMs.p95), throughput: ratio(apiSearch[c]!.rps, pgSearch[c]!.tps) },
    })),
    ingest: {
      clients: m.ingestClients, pgbench: strip(pgIngest!), api: strip(apiIngest!), rowsWritten: ingestRows,
      ratio: { throughput: ratio(apiIngest!.rps, pgIngest!.tps), p95: ratio(apiIngest!.latencyMs.p95, pgIngest!.latencyMs.p95) },
      diagnostics: Object.fromEntries(Object.entries(diagnostics).map(([k, v]) => [k, strip(v)])),
    },
    serverProfile,
    pdf,
    client: client!,
    load: loadSpans,
    settings: { rounds: m.rounds, seconds: m.seconds, warmSeconds: m.warmSeconds, profileSeconds: m.profileSeconds, pdfRuns: m.pdfRuns, browserLoads: m.loads, cpuSlowdown: 4, ingestCases: fx.cases.length },
  }
  const targets = evaluateTargets(report)
  const full = { ...report, targets }
  mkdirSync(m.out, { recursive: true })
  writeFileSync(path.join(m.out, 'report.json'), JSON.stringify(full, null, 2) + '\n')
  writeFileSync(path.join(m.out, 'REPORT.md'), renderMarkdown(full))
  log('report', `${path.relative(ROOT, path.join(m.out, 'REPORT.md'))} and report.json written`)
  for (const t of targets) console.log(`  ${t.pass ? 'pass' : 'FAIL'}  ${t.what}: ${t.measured} (target ${t.target})`)
  if (m.smoke) {
    // every part must have produced its figures; the targets are reported, not asserted
    const missing = [
      ...report.lotSearch.flatMap((l) => [l.pgbench.transactions > 0 ? null : `pgbench search ${l.clients}`, l.api.ok > 0 ? null : `api search ${l.clients}`]),
      report.ingest.pgbench.transactions > 0 ? null : 'pgbench ingest', report.ingest.api.ok > 0 ? null : 'api ingest',
      report.ingest.rowsWritten >= report.ingest.api.ok ? null : 'ingest rows (fewer rows than 201 answers)',
      pdf.record?.medianMs > 0 && pdf.card?.medianMs > 0 ? null : 'pdf',
      report.client.pages.every((p) => p.js.gzipBytes > 0 && p.hydratedMedianMs > 0) ? null : 'client',
    ].filter(Boolean)
    if (missing.length) throw new Error(`smoke run produced no figures for: ${missing.join(', ')}`)
    console.log('bench smoke: ok')
  }
}

function gitInfo() {
  try {
    const commit = execFileSync('git', ['rev-parse', '--short', 'HEAD'], { cwd: ROOT, encoding: 'utf8' }).trim()
    const dirty = execFileSync('git', ['status', '--porcelain', '--', 'app', 'server', 'shared', 'db', 'nuxt.config.ts'], { cwd: ROOT, encoding: 'utf8' }).trim() !== ''
    return { commit, dirty }
  } catch {
    return { commit: 'unknown', dirty: null }
  }
}

main().then(() => process.exit(0)).catch((e) => {
  console.error(`[bench] failed: ${e instanceof Error ? e.message : e}`)
  process.exit(1)
})
