/**
 * Targets and the Markdown report. Pass/fail is printed beside each figure, never asserted.
 * Standalone: `tsx bench/report.ts [bench/report.json]` renders REPORT.md again beside the JSON.
 */
import { readFileSync, writeFileSync } from 'node:fs'
import path from 'node:path'
import { INGEST_SCRIPT } from './lib/pgbench'

// the statements of one scan, counted from the pgbench script that mirrors the route
const INGEST_STATEMENTS = INGEST_SCRIPT.split('\n').filter((l) => /^(select|insert|update|with)\b/i.test(l)).length

export interface Target { id: string; what: string; target: string; measured: string; pass: boolean; why?: string }

const ms = (x: number | null | undefined, d = 1) => (x == null || !Number.isFinite(x) ? 'n/a' : `${x.toFixed(d)} ms`)
const times = (x: number) => (Number.isFinite(x) ? `${x.toFixed(2)}×` : 'n/a')
const pct = (x: number) => (Number.isFinite(x) ? `${(x * 100).toFixed(0)} %` : 'n/a')
const kb = (b: number) => `${(b / 1024).toFixed(1)} KB`
const signed = (x: number) => (Number.isFinite(x) ? `${x >= 0 ? '+' : '−'}${Math.abs(x * 100).toFixed(0)} %` : 'n/a')
const n0 = (x: number) => (Number.isFinite(x) ? Math.round(x).toLocaleString('en-US') : 'n/a')

function topNames(list: { name: string; share: number }[] | undefined, k = 4): string {
  return (list ?? []).slice(0, k).map((p) => `${frameName(p.name).replace(/^bench\/\.cache\/output\/server\//, 'built server: ')} ${(p.share * 100).toFixed(0)} %`).join(', ')
}

/** What the hot functions of a server profile are, in the app's terms (only those seen in this code). */
const KNOWN: [RegExp, string][] = [
  [/^(dayInZone|partsInZone) /, 'shared/utils/dates.ts formats the day of every result row in the facility\'s zone (formatToParts, one cached formatter per zone)'],
  [/^(getEnv|applyEnv|kebabCase|snakeCase|splitByCase) /, "Nitro's useRuntimeConfig(event) deep-copies the runtime config and re-reads every key from process.env on its first call in a request; our own code reads the config once per process (trustsProxy in server/utils/http.ts), so a module calls it"],
  [/^writev /, 'socket writes: node-postgres writes each statement to the database, and each answer goes out'],
  [/^\(garbage collector\)/, 'garbage collection'],
]
/** A profile frame as people read it: no build-copy path, native frames marked as such. */
function frameName(name: string): string {
  return name.replace(/ \(\(native code, GC\)\)$/, ' (native)').replace(/^(\([^)]*\)) \(native\)$/, '$1')
    .replace(/ \((?:bench\/\.cache\/output\/server\/|\.output\/server\/)?([^)]*)\)$/, ' ($1)')
}

function annotated(prof: any, k = 5): string {
  if (!prof?.byFunction?.length) return prof?.error ? `no profile (${prof.error})` : 'no profile'
  return prof.byFunction.slice(0, k).map((f: any) => {
    const note = KNOWN.find(([re]) => re.test(f.name))?.[1]
    const name = frameName(f.name)
    return `${name} ${(f.share * 100).toFixed(0)} %${note ? ` — ${note}` : ''}`
  }).join('; ')
}

/** CPU ms per unit of work, and the rate the machine's cores allow at that cost. */
function budget(r: any, parts: Record<string, number | undefined>) {
  const cores = r.machine.cores as number
  const total = Object.values(parts).reduce((a: number, b) => a + (b ?? 0), 0)
  return { total, ceiling: total > 0 ? (cores * 1000) / total : NaN, text: Object.entries(parts).map(([k, v]) => `${k} ${ms(v, 2)}`).join(' + ') }
}

function cpuSentence(r: any, pg: any, api: any, unit: string): string | null {
  const pc = pg?.cpuMsPerTxn
  const ac = api?.cpuMsPerRequest
  if (!pc || !ac) return null
  const b0 = budget(r, { PostgreSQL: pc.postgres, pgbench: pc.pgbench })
  const b1 = budget(r, { PostgreSQL: ac.postgres, 'app server': ac.server, autocannon: ac.autocannon })
  return `CPU per ${unit}: through pgbench ${b0.text} = ${ms(b0.total, 2)}, which ${r.machine.cores} cores could serve ≈ ${n0(b0.ceiling)} times a second (measured ${n0(pg.tps)}); through the API ${b1.text} = ${ms(b1.total, 2)}, ≈ ${n0(b1.ceiling)}/s (measured ${n0(api.rps)}). ` +
    `Database, app server and load generator share the same ${r.machine.cores} cores, so the server's ${ms(ac.server, 2)} per request comes straight off the rate: the API needs ${(b1.total / b0.total).toFixed(1)}× the CPU of the bare SQL.`
}

/** With clients sending back to back, latency ≈ clients ÷ rate: a latency goal is a rate goal. */
function closedLoop(clients: number, goalMs: number, pg: any, what: string): string {
  const need = (clients * 1000) / goalMs
  const real = what === 'scans' ? `${clients} devices scanning without a pause is also far more than ${clients} theatres, where a device scans a pack every minute or so` : `${clients} people searching without a pause is also far more than a hospital group's coordinators do`
  return `With ${clients} clients sending back to back, the mean latency is about ${clients} ÷ rate (Little's law), so a p95 of ${goalMs} ms needs well over ${n0(need)} ${what}/s; PostgreSQL alone managed ${n0(pg.tps)}/s here, with p95 ${ms(pg.latencyMs.p95, 1)}. ${real}.`
}

/** One explanation per area, for the areas with a missed target. */
export function findings(r: any, targets: Target[]): { area: string; misses: string[]; points: string[] }[] {
  const miss = (id: string) => targets.find((t) => t.id === id && !t.pass)
  const out: { area: string; misses: string[]; points: string[] }[] = []
  const s = r.lotSearch.find((l: any) => l.clients === 10) ?? r.lotSearch[r.lotSearch.length - 1]
  const ids = (...x: string[]) => x.filter((i) => miss(i)).map((i) => miss(i)!.what)
  if (miss('search-p50-ratio') || miss('search-p95')) {
    const pts = [cpuSentence(r, s.pgbench, s.api, 'search')].filter(Boolean) as string[]
    pts.push(`Where the server's CPU goes in a search (V8 profile, self time): ${annotated(r.serverProfile?.search)}.`)
    if (miss('search-p95')) pts.push(closedLoop(s.clients, 30, s.pgbench, 'searches'))
    const pl = r.heaviestSearchPlan
    if (pl) pts.push(`The SQL itself (server/queries/trace.ts): the page reads the lot's newest rows from the lot index in order and joins cases, patients, users and facilities for those only; a full first page also counts the lot apart. The heaviest lot in the set (${n0(pl.rows)} rows) takes ${ms(pl.executionMs, 1)} to execute and ${ms(pl.planningMs, 1)} to plan on a warm cache — planning six joins costs about as much as running them, for pgbench and the API alike.`)
    const one = r.lotSearch.find((l: any) => l.clients === 1)
    if (one) pts.push(`One client at a time: API p50 ${ms(one.api.latencyMs.p50, 1)} / p95 ${ms(one.api.latencyMs.p95, 1)} against pgbench ${ms(one.pgbench.latencyMs.p50, 1)} / ${ms(one.pgbench.latencyMs.p95, 1)}.`)
    out.push({ area: 'Lot search', misses: ids('search-p50-ratio', 'search-p95'), points: pts })
  }
  const ing = r.ingest
  if (miss('ingest-rate') || miss('ingest-p95') || miss('ingest-errors')) {
    const pts = [cpuSentence(r, ing.pgbench, ing.api, 'scan')].filter(Boolean) as string[]
    pts.push(`Where the server's CPU goes in a scan (V8 profile, self time): ${annotated(r.serverProfile?.ingest)}.`)
    pts.push(`Each scan is ${INGEST_STATEMENTS} statements sent one after another (server/api/cases/[id]/items/index.post.ts: 4 reads, then a transaction that holds a pool connection and the case's row lock across every round trip); the pool has ${r.machine.serverPool.replace('DATABASE_POOL_MAX=', '')} connections for ${ing.clients} clients, so requests also wait for a connection.`)
    if (miss('ingest-p95')) pts.push(closedLoop(ing.clients, 50, ing.pgbench, 'scans'))
    const dg = ing.diagnostics ?? {}
    const d = dg['no-notify']
    if (d) {
      pts.push(`What live updates cost PostgreSQL (a diagnostic pgbench variant, taking turns with the unchanged script; on a busy machine the difference is noisy): notifyLive in server/utils/live.ts calls pg_notify inside the transaction, and PostgreSQL holds one lock for every notifying transaction through its commit, so those commits (WAL flush included) go one at a time — without it: ${signed(d.tps / (d.asIs?.tps ?? ing.pgbench.tps) - 1)}.`)
    }
    if (miss('ingest-errors')) pts.push(`Answers other than 2xx: ${JSON.stringify(ing.api.statuses)}.`)
    out.push({ area: 'Scan ingest', misses: ids('ingest-rate', 'ingest-p95', 'ingest-errors'), points: pts })
  }
  const pdf = r.pdf
  if (miss('pdf-record') || miss('pdf-card')) {
    out.push({
      area: 'PDF', misses: ids('pdf-record', 'pdf-card'), points: [
        `An empty page with the same three fonts (subset per document by server/utils/pdf/fonts.ts), saved, takes ${ms(pdf.fontsOnly.medianMs)} (CPU ${ms(pdf.fontsOnly.cpuMedianMs)}); the wallet card is ${kb(pdf.card.bytes)} and the record ${kb(pdf.record.bytes)}.`,
        `CPU profile of the record (self time): ${topNames(pdf.recordProfile?.byPackage, 5)}; top functions ${topNames(pdf.recordProfile?.byFunction, 4)}.`,
      ],
    })
  }
  const sizing = r.client.pages.filter((p: any) => !p.path.endsWith('/implants'))
  if (miss('tti-sizing') || miss('js-scan')) {
    const scan = r.client.pages.find((p: any) => p.path.endsWith('/implants'))
    const pts = sizing.map((p: any) => `${p.path.replace(/\/cases\/\d+/, '/cases/[id]')}: ${kb(p.js.gzipBytes)} of its own JS (gzip) in ${p.js.files} files — largest ${chunkList(p.js.chunks, 3)}; ${ms(p.hydratedMedianMs, 0)} cold, ${ms(p.warmHydratedMedianMs, 0)} with a warm cache.`)
    pts.push('At 4× CPU slowdown most of the cold time is parsing, compiling and running that JS (and the SSR payload) before the app mounts; the warm-cache loads, where the compiled code is cached, show how much.')
    if (scan) {
      const decoder = scan.js.chunks.some((c: any) => (c.holds ?? []).some((h: string) => h.includes('@zxing')))
      pts.push(`The scan page (within its JS target): ${chunkList(scan.js.chunks, 3)} — ${decoder ? 'the barcode decoder is fetched on every visit, before anyone opens the camera' : 'the barcode decoder is not fetched until someone opens the camera or a photo'}.`)
    }
    out.push({ area: 'Client', misses: ids('tti-sizing', 'js-scan'), points: pts })
  }
  return out
}

export function evaluateTargets(r: any): Target[] {
  const s = r.lotSearch.find((l: any) => l.clients === 10) ?? r.lotSearch[r.lotSearch.length - 1]
  const items = r.dataset.counts.case_items as number
  const atScale = items >= 2_000_000
  const ing = r.ingest
  const errors = ing.api.non2xx + ing.api.errors + ing.api.timeouts
  const pdf = r.pdf
  const scan = r.client.pages.find((p: any) => p.path.endsWith('/implants'))
  const sizing = r.client.pages.filter((p: any) => !p.path.endsWith('/implants'))
  const worstSizing = Math.max(...sizing.map((p: any) => p.hydratedMedianMs))
  const scale = atScale ? '' : ` — smoke data (${n0(items)} items), not the 2M the target is for`
  const prof = r.serverProfile ?? {}
  const t: Target[] = [
    {
      id: 'search-p50-ratio', what: `Lot search: API p50 vs pgbench p50, ${s.clients} clients`, target: '≤ 2× pgbench',
      measured: `${times(s.ratio.p50)} (API ${ms(s.api.latencyMs.p50, 2)}, pgbench ${ms(s.pgbench.latencyMs.p50, 2)})${scale}`,
      pass: s.ratio.p50 <= 2,
    },
    {
      id: 'search-p95', what: `Lot search: API p95, ${s.clients} clients, ${n0(items)} case items`, target: '≤ 30 ms',
      measured: `${ms(s.api.latencyMs.p95, 2)}${scale}`, pass: s.api.latencyMs.p95 <= 30,
    },
    {
      id: 'ingest-rate', what: `Scan ingest: API rate vs pgbench rate, ${ing.clients} clients`, target: '≥ 50 % of pgbench',
      measured: `${pct(ing.ratio.throughput)} (API ${n0(ing.api.rps)} req/s, pgbench ${n0(ing.pgbench.tps)} tps)`, pass: ing.ratio.throughput >= 0.5,
    },
    {
      id: 'ingest-errors', what: `Scan ingest: errors (non-2xx, socket errors, timeouts), ${ing.clients} clients`, target: '0',
      measured: `${errors} of ${n0(ing.api.requests)} (${Object.entries(ing.api.statuses).map(([k, v]) => `${k}: ${v}`).join(', ')})`, pass: errors === 0,
    },
    {
      id: 'ingest-p95', what: `Scan ingest: API p95, ${ing.clients} clients`, target: '≤ 50 ms',
      measured: `${ms(ing.api.latencyMs.p95, 1)} (pgbench ${ms(ing.pgbench.latencyMs.p95, 1)})`, pass: ing.api.latencyMs.p95 <= 50,
    },
    {
      id: 'pdf-record', what: `Signed record PDF, ${pdf.implants} implants, ${pdf.pages} pages (median)`, target: '≤ 100 ms',
      measured: `${ms(pdf.record.medianMs)} (CPU ${ms(pdf.record.cpuMedianMs)}, ${kb(pdf.record.bytes)})`, pass: pdf.record.medianMs <= 100,
    },
    {
      id: 'pdf-card', what: 'Patient implant card (median)', target: '≤ 50 ms',
      measured: `${ms(pdf.card.medianMs)} (CPU ${ms(pdf.card.cpuMedianMs)}, ${kb(pdf.card.bytes)})`, pass: pdf.card.medianMs <= 50,
    },
    {
      id: 'js-scan', what: 'Scan page (/cases/[id]/implants) JS, gzip', target: '≤ 250 KB',
      measured: `${kb(scan.js.gzipBytes)} in ${scan.js.files} files (${kb(scan.js.eagerGzipBytes ?? scan.js.gzipBytes)} for the route, ${kb(scan.js.lazyGzipBytes ?? 0)} it imports itself as it loads); with the other steps' chunks Nuxt prefetches afterwards ${kb(scan.js.gzipBytes + (scan.prefetched?.gzipBytes ?? 0))}`,
      pass: scan.js.gzipBytes <= 250 * 1024,
    },
    {
      id: 'tti-sizing', what: 'Sizing pages (/cases/[id], /cases/[id]/sizes) interactive, 4× CPU slowdown, cold cache (median)', target: '≤ 1.5 s',
      measured: sizing.map((p: any) => `${p.path.replace(/\/cases\/\d+/, '/cases/[id]')} ${ms(p.hydratedMedianMs, 0)}`).join(', '), pass: worstSizing <= 1500,
    },
  ]
  // the reasons live in findings(), one per area; each miss points there
  for (const x of t) if (!x.pass) x.why = 'see findings'
  return t
}

function chunkList(chunks: { file: string; gzipBytes: number; holds?: string[]; kind?: string }[], k: number): string {
  return chunks.slice(0, k).map((c) => `${path.basename(c.file)} ${kb(c.gzipBytes)}${c.kind === 'lazy' ? ' lazy' : ''}${c.holds?.length ? ` (${c.holds.join(', ')})` : ''}`).join(', ')
}

function cpuCell(...v: (number | undefined | null)[]): string {
  return v.some((x) => x != null && Number.isFinite(x)) ? v.map((x) => (x == null || !Number.isFinite(x) ? '–' : x.toFixed(2))).join(' / ') + ' ms' : 'n/a'
}

function row(cells: (string | number)[]) {
  return `| ${cells.join(' | ')} |`
}

export function renderMarkdown(r: any): string {
  const L: string[] = []
  const m = r.machine
  const passN = r.targets.filter((t: Target) => t.pass).length
  L.push(`# Isthmus benchmark report${r.mode === 'smoke' ? ' (smoke run — tiny data, short runs: not figures to judge by)' : ''}`)
  L.push('')
  L.push(`Run ${r.startedAt} → ${r.generatedAt}, commit ${r.commit.commit}${r.commit.dirty ? ' with uncommitted changes in app/server/shared/db' : ''}. ` +
    `Made by \`bash bench/run.sh${r.mode === 'smoke' ? ' --smoke' : ''}\`; every figure below comes from that run (bench/report.json holds them all).`)
  L.push('')
  L.push(`**Targets: ${passN} of ${r.targets.length} met.**`)
  L.push('')
  L.push(row(['', 'Target', 'Goal', 'Measured']))
  L.push(row(['---', '---', '---', '---']))
  for (const t of r.targets as Target[]) L.push(row([t.pass ? 'pass' : '**FAIL**', t.what, t.target, t.measured]))
  L.push('')
  const fs = findings(r, r.targets)
  if (fs.length) {
    L.push('## What is slow, and why')
    L.push('')
    for (const f of fs) {
      L.push(`### ${f.area}${f.misses.length ? ` — misses: ${f.misses.map((w) => w.replace(/^(Lot search|Scan ingest): /, '')).join('; ')}` : ''}`)
      L.push('')
      for (const p of f.points) L.push(`- ${p}`)
      L.push('')
    }
  }
  L.push('## Machine')
  L.push('')
  L.push(`- CPU: ${m.cpu}, ${m.cores} cores; memory ${m.memoryGiB} GiB; ${m.os}`)
  L.push(`- Node ${m.node}; ${m.postgres.split(' on ')[0]}; ${m.pgbench}; ${r.client.browser ? `Chromium ${r.client.browser}` : ''}`)
  L.push(`- PostgreSQL settings: ${Object.entries(m.postgresSettings).map(([k, v]) => `${k}=${v}`).join(', ')}`)
  L.push(`- App server: the built Nuxt server (\`node .output/server/index.mjs\`), one process, ${m.serverPool}; everything on 127.0.0.1`)
  const busy = Object.entries(r.load ?? {}).filter(([, v]: any) => v.foreignCores != null)
  if (busy.length) {
    L.push(`- Other work on the machine during each part (mean cores used by processes outside the benchmark, PostgreSQL backends of other databases included; other sessions share this machine): ` +
      busy.map(([k, v]: any) => `${k} ${v.foreignCores}${v.busiest.length ? ` (${v.busiest.join(', ')})` : ''}`).join('; ') +
      '. Above ~0.2 cores the figures of that part are pessimistic.')
  }
  L.push('')

  const d = r.dataset
  L.push('## Data')
  L.push('')
  L.push(`Database \`${d.db}\` from \`bench/generate.ts\` (seed \`${d.seed}\`, scale ${d.scale}; ${(d.sizeBytes / 2 ** 30).toFixed(2)} GiB; generated in ${d.generateSeconds} s when it was made): ` +
    `${n0(d.counts.cases)} cases, ${n0(d.counts.case_items)} case items, ${n0(d.counts.patients)} patients, ${d.counts.facilities} facilities, ${d.counts.theatres} theatres, ${n0(d.counts.users)} users, ` +
    `${n0(d.counts.scan_events)} scan events, ${n0(d.counts.stock_movements)} stock movements, ${n0(d.counts.stock_lines)} stock lines, ${n0(d.counts.audit_log)} audit rows, ${n0(d.counts.phi_access_log)} PHI-access rows. ` +
    `${n0(d.lots.distinct)} lots in use (per item: min ${d.lots.perItem.min}, median ${d.lots.perItem.median}, max ${d.lots.perItem.max}).`)
  L.push('')
  L.push(`Lot searches pick from ${r.lotSample.lots} lots (half uniform over used lots, half weighted by use); rows per lot: min ${r.lotSample.rowsPerLot.min}, median ${r.lotSample.rowsPerLot.median}, p90 ${r.lotSample.rowsPerLot.p90}, max ${r.lotSample.rowsPerLot.max}. The searching user is a group-wide coordinator (all 20 facilities).`)
  L.push('')

  L.push('## Lot search — GET /api/trace?lot=…')
  L.push('')
  L.push(`pgbench runs the statements the API sends for one search (the user check of requireRole, the search SQL produced by server/queries/trace.ts, the PHI-access insert), captured from the app's own query code at run time, with the extended protocol like the node-postgres driver. autocannon sends the same searches to the built server. The two take turns (${r.settings.rounds} rounds of ${Math.round(r.settings.seconds / r.settings.rounds)} s each per side after a ${r.settings.warmSeconds} s warm-up) and each side's rounds are pooled, so both meet the same spells of other load.`)
  L.push('')
  L.push(row(['Clients', 'Path', 'Rate', 'p50', 'p95', 'p99', 'Errors', 'API ÷ pgbench p50', 'CPU per search: PostgreSQL / client / app server']))
  L.push(row(['---', '---', '---', '---', '---', '---', '---', '---', '---']))
  for (const l of r.lotSearch) {
    L.push(row([l.clients, 'pgbench', `${n0(l.pgbench.tps)} tps`, ms(l.pgbench.latencyMs.p50, 2), ms(l.pgbench.latencyMs.p95, 2), ms(l.pgbench.latencyMs.p99, 2), l.pgbench.failed, '', cpuCell(l.pgbench.cpuMsPerTxn?.postgres, l.pgbench.cpuMsPerTxn?.pgbench)]))
    L.push(row([l.clients, 'API', `${n0(l.api.rps)} req/s`, ms(l.api.latencyMs.p50, 2), ms(l.api.latencyMs.p95, 2), ms(l.api.latencyMs.p99, 2), l.api.non2xx + l.api.errors + l.api.timeouts, times(l.ratio.p50), cpuCell(l.api.cpuMsPerRequest?.postgres, l.api.cpuMsPerRequest?.autocannon, l.api.cpuMsPerRequest?.server ?? l.api.serverCpuMsPerRequest)]))
  }
  L.push('')
  const pl = r.heaviestSearchPlan
  if (pl) {
    L.push(`Plan of the heaviest search in the set (lot ${pl.lot}, ${n0(pl.rows)} rows; EXPLAIN ANALYZE, warm cache): planning ${ms(pl.planningMs, 2)}, execution ${ms(pl.executionMs, 2)}, ${n0(pl.sharedHit)} buffer hits, ${n0(pl.sharedRead)} reads.`)
    L.push('')
    L.push('```')
    for (const n of pl.nodes) L.push(n)
    L.push('```')
    L.push('')
  }

  const ing = r.ingest
  L.push(`## Scan ingest — POST /api/cases/:id/items, ${ing.clients} clients`)
  L.push('')
  L.push(`Taking turns with pgbench like the search (${r.settings.rounds} rounds of ${Math.round(r.settings.seconds / r.settings.rounds)} s per side). Each request is a wedge scan of a nail with its own client key and serial into one of ${r.settings.ingestCases ?? 60} open cases (one client per case at a time, each case with its own lot on its own shelf line, so no two clients wait on one row), and lands as result "check" (the aiming-guide reminder) with the full write: case item, shelf decrement, stock movement, audit row, scan event, live notification. pgbench runs the same 20 statements (checked against PostgreSQL's statement log of a real request), building the per-request strings in SQL because pgbench variables are numbers.`)
  L.push('')
  L.push(row(['Path', 'Rate', 'p50', 'p95', 'p99', 'Errors', 'CPU per scan: PostgreSQL / client / app server']))
  L.push(row(['---', '---', '---', '---', '---', '---', '---']))
  L.push(row(['pgbench', `${n0(ing.pgbench.tps)} tps`, ms(ing.pgbench.latencyMs.p50, 1), ms(ing.pgbench.latencyMs.p95, 1), ms(ing.pgbench.latencyMs.p99, 1), ing.pgbench.failed, cpuCell(ing.pgbench.cpuMsPerTxn?.postgres, ing.pgbench.cpuMsPerTxn?.pgbench)]))
  L.push(row(['API', `${n0(ing.api.rps)} req/s (${pct(ing.ratio.throughput)} of pgbench)`, ms(ing.api.latencyMs.p50, 1), ms(ing.api.latencyMs.p95, 1), ms(ing.api.latencyMs.p99, 1),
    ing.api.non2xx + ing.api.errors + ing.api.timeouts, cpuCell(ing.api.cpuMsPerRequest?.postgres, ing.api.cpuMsPerRequest?.autocannon, ing.api.cpuMsPerRequest?.server ?? ing.api.serverCpuMsPerRequest)]))
  L.push('')
  const dg = Object.entries(ing.diagnostics ?? {}) as [string, any][]
  if (dg.length) {
    L.push(`Diagnostics (pgbench only, not targets): the same transaction changed in one respect, taking turns with the unchanged one (${dg[0]![1].rounds ?? 1} rounds of ${Math.round(dg[0]![1].seconds / (dg[0]![1].rounds ?? 1))} s each), to show what a choice in the app's SQL costs PostgreSQL.`)
    L.push('')
    L.push(row(['Variant', 'Rate', 'p50', 'p95', 'Unchanged, same turns', 'Change']))
    L.push(row(['---', '---', '---', '---', '---', '---']))
    const words: Record<string, string> = {
      'no-notify': 'no `pg_notify` in the transaction (server/utils/live.ts notifyLive: PostgreSQL takes one lock for all notifying transactions and holds it through commit, so their commits — WAL flush included — go one at a time)',
    }
    for (const [k, d] of dg) {
      const base = d.asIs ?? ing.pgbench
      L.push(row([words[k] ?? k, `${n0(d.tps)} tps`, ms(d.latencyMs.p50, 1), ms(d.latencyMs.p95, 1), `${n0(base.tps)} tps, p95 ${ms(base.latencyMs.p95, 1)}`, signed(d.tps / base.tps - 1) + ' rate']))
    }
    L.push('')
  }
  L.push(`API answers: ${Object.entries(ing.api.results ?? {}).map(([k, v]) => `${k} ${n0(v as number)}`).join(', ')}; ${n0(ing.rowsWritten)} case items written for ${n0(ing.api.ok)} 2xx answers counted in the window (the rest: requests still in flight when the load generator stopped, which the server finished)${ing.api.notes?.length ? `; ${ing.api.notes.join('; ')}` : ''}.`)
  L.push('')

  if (r.serverProfile) {
    L.push('### Where the server spends its CPU (V8 profile of the built server under each load, self time)')
    L.push('')
    for (const [k, p] of Object.entries(r.serverProfile) as [string, any][]) {
      if (!p?.byPackage) { L.push(`- ${k}: ${p?.error ?? 'no profile'}`); continue }
      L.push(`- ${k === 'search' ? 'Lot search' : 'Scan ingest'} (${n0(p.requests)} requests, ${n0(p.sampledMs)} ms sampled): ${topNames(p.byPackage, 8)}`)
      L.push(`  - top functions: ${topNames(p.byFunction, 6)}`)
    }
    L.push('')
  }

  const pdf = r.pdf
  L.push('## PDF')
  L.push('')
  L.push(`In-process (tsx, server/utils/pdf/record-pdf.ts and implant-card.ts, shared/utils/record.ts), from a snapshot built in code: a signed long-nail record with ${pdf.implants} implants (${pdf.pages} pages), and the nail's patient card. ${pdf.record.runs} timed runs after warm-up; wall time and, beside it, CPU time of the process (V8's garbage-collector and compiler threads count too, so it can exceed the wall time).`)
  L.push('')
  L.push(row(['Document', 'Median', 'p95', 'Min', 'Cold (first)', 'CPU median', 'Size']))
  L.push(row(['---', '---', '---', '---', '---', '---', '---']))
  L.push(row(['Signed record (build + hash + render)', ms(pdf.record.medianMs), ms(pdf.record.p95Ms), ms(pdf.record.minMs), ms(pdf.record.coldMs), ms(pdf.record.cpuMedianMs), kb(pdf.record.bytes)]))
  L.push(row(['Patient implant card', ms(pdf.card.medianMs), ms(pdf.card.p95Ms), ms(pdf.card.minMs), ms(pdf.card.coldMs), ms(pdf.card.cpuMedianMs), kb(pdf.card.bytes)]))
  L.push(row(['Control: empty page, same three fonts, saved', ms(pdf.fontsOnly.medianMs), ms(pdf.fontsOnly.p95Ms), ms(pdf.fontsOnly.minMs), ms(pdf.fontsOnly.coldMs), ms(pdf.fontsOnly.cpuMedianMs), '']))
  L.push('')
  if (pdf.recordProfile) {
    L.push(`Record CPU profile (self time, ${pdf.recordProfile.runs} renders): ${topNames(pdf.recordProfile.byPackage, 6)}. Top functions: ${topNames(pdf.recordProfile.byFunction, 6)}.`)
    L.push('')
  }

  L.push('## Client')
  L.push('')
  L.push(`Chromium (playwright-core, Debian's build) on a 1180×820 tablet viewport, CPU slowed ${r.settings.cpuSlowdown}× (Emulation.setCPUThrottlingRate), no network throttling (loopback). Time to interactive = ms from navigation start until \`body[data-hydrated="true"]\` (set by app.vue on mount); ${r.settings.browserLoads} cold loads per page (fresh context each), plus warm-cache reloads. JS = every script the page loaded up to network idle, sized as the build's precompressed .gz files (1 KB = 1024 bytes), sorted with the build's client manifest into the page's own JS — what its route needs, and what its components import on their own (lazy) — and the other steps' chunks that Nuxt prefetches once the page is idle because their links are on screen. The JS target is judged on the page's own JS.`)
  L.push('')
  L.push(row(['Page', 'Own JS gzip (route + lazy)', 'Files', 'Raw', 'Brotli', 'Prefetched for other steps', 'CSS gzip', 'Interactive, median cold', 'Each cold load', 'Median warm']))
  L.push(row(['---', '---', '---', '---', '---', '---', '---', '---', '---', '---']))
  for (const p of r.client.pages) {
    L.push(row([p.path.replace(/\/cases\/\d+/, '/cases/[id]'), `${kb(p.js.gzipBytes)} (${kb(p.js.eagerGzipBytes ?? p.js.gzipBytes)} + ${kb(p.js.lazyGzipBytes ?? 0)})`, p.js.files, kb(p.js.rawBytes), p.js.brotliBytes ? kb(p.js.brotliBytes) : 'n/a',
      p.prefetched ? `${kb(p.prefetched.gzipBytes)} in ${p.prefetched.files}` : 'n/a', kb(p.css.gzipBytes),
      ms(p.hydratedMedianMs, 0), p.hydratedMs.map((x: number) => x.toFixed(0)).join(', '), ms(p.warmHydratedMedianMs, 0)]))
  }
  L.push('')
  const scan = r.client.pages.find((p: any) => p.path.endsWith('/implants'))
  for (const p of r.client.pages) L.push(`- ${p.path.replace(/\/cases\/\d+/, '/cases/[id]')}: largest chunks (gzip) ${chunkList(p.js.chunks, 6)}`)
  L.push('')

  L.push('## How to run')
  L.push('')
  L.push('- `npm run bench` (= `bash bench/run.sh`): builds when the build is missing or older than the sources, starts the local PostgreSQL (scripts/db.sh), generates `isthmus_bench` once (skipped while it holds this seed and scale under the current migrations; `--regenerate` rebuilds it), runs every part and writes bench/REPORT.md and bench/report.json. About 15 minutes on 2 cores the first time, half that afterwards.')
  L.push('- `bash bench/run.sh --smoke`: scale 0.001 in `isthmus_bench_smoke`, 2 s per load level; writes bench/.cache/smoke/ and ends with `bench smoke: ok`.')
  L.push('- Parts on their own: `npx tsx bench/generate.ts --scale 0.01 --db NAME`, `npx tsx bench/pdf.ts --runs 40`, `npx tsx bench/report.ts bench/report.json` (renders this file again).')
  L.push('')
  L.push('Not in the data: readings and sizing decisions of past cases, stored record PDFs, login attempts, e-mail — no measured path reads them except by case id. Each part starts from the generated rows (rows earlier parts added are deleted and vacuumed away); planner statistics stay as the generator left them.')
  L.push('')
  return L.join('\n')
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const file = path.resolve(process.argv[2] ?? path.join(import.meta.dirname, 'report.json'))
  const r = JSON.parse(readFileSync(file, 'utf8'))
  r.targets = evaluateTargets(r)
  writeFileSync(file, JSON.stringify(r, null, 2) + '\n')
  writeFileSync(path.join(path.dirname(file), 'REPORT.md'), renderMarkdown(r))
  console.log(`rendered ${path.join(path.dirname(file), 'REPORT.md')}`)
}
