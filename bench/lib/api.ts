// The same two paths through the built server, loaded with autocannon from this process over loopback.
import { spawn, type ChildProcess } from 'node:child_process'
import { randomBytes, randomUUID } from 'node:crypto'
import { existsSync, readFileSync } from 'node:fs'
import { createServer } from 'node:net'
import path from 'node:path'
import autocannon from 'autocannon'
import { Client } from '../../tests/helpers/http'
import type { BenchCase } from './fixture'
import { dbUrl, OUTPUT, percentile, ROOT } from './env'

export interface ApiResult {
  connections: number; seconds: number
  requests: number; ok: number; rps: number
  non2xx: number; errors: number; timeouts: number; statuses: Record<string, number>
  latencyMs: { mean: number; p50: number; p95: number; p99: number; max: number }
  /** CPU time the server process used per answered request (user + system) */
  serverCpuMsPerRequest: number | null
  results?: Record<string, number>
  notes?: string[]
  /** filled in by the harness: CPU ms per request of PostgreSQL (this database), the server, autocannon */
  cpuMsPerRequest?: { postgres: number; server: number; autocannon: number }
  /** per-request latencies (ms), for pooling rounds; not written to the report */
  samples?: Float64Array
  rounds?: number
}

const stats = (s: Float64Array) => ({
  mean: s.reduce((a, b) => a + b, 0) / (s.length || 1), p50: percentile(s, 50), p95: percentile(s, 95), p99: percentile(s, 99), max: s[s.length - 1] ?? NaN,
})

/** Several rounds as one: latencies pooled, counts summed, rate = 2xx answers over all seconds. */
export function poolApi(rs: ApiResult[]): ApiResult {
  const all = Float64Array.from(rs.flatMap((r) => [...(r.samples ?? [])])).sort()
  const sum = (f: (r: ApiResult) => number) => rs.reduce((a, r) => a + f(r), 0)
  const seconds = sum((r) => r.seconds)
  const requests = sum((r) => r.requests)
  const statuses: Record<string, number> = {}
  const results: Record<string, number> = {}
  for (const r of rs) {
    for (const [k, v] of Object.entries(r.statuses)) statuses[k] = (statuses[k] ?? 0) + v
    for (const [k, v] of Object.entries(r.results ?? {})) results[k] = (results[k] ?? 0) + v
  }
  const w = (f: (r: ApiResult) => number | undefined) => (rs.every((r) => f(r) != null) ? sum((r) => f(r)! * r.requests) / (requests || 1) : undefined)
  const cpu = rs.every((r) => r.cpuMsPerRequest) ? { postgres: w((r) => r.cpuMsPerRequest!.postgres)!, server: w((r) => r.cpuMsPerRequest!.server)!, autocannon: w((r) => r.cpuMsPerRequest!.autocannon)! } : undefined
  const notes = rs.flatMap((r) => r.notes ?? [])
  return {
    connections: rs[0]!.connections, seconds, requests, ok: sum((r) => r.ok), rps: sum((r) => r.ok) / seconds,
    non2xx: sum((r) => r.non2xx), errors: sum((r) => r.errors), timeouts: sum((r) => r.timeouts), statuses,
    latencyMs: stats(all), serverCpuMsPerRequest: w((r) => r.serverCpuMsPerRequest ?? undefined) ?? null,
    ...(Object.keys(results).length ? { results } : {}), ...(notes.length ? { notes } : {}), cpuMsPerRequest: cpu, samples: all, rounds: rs.length,
  }
}

export interface RunningServer { url: string; pid: number; child: ChildProcess; stop: () => Promise<void>; output: () => string; inspector: string | null }

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer()
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as { port: number }).port
      s.close(() => resolve(port))
    })
    s.on('error', reject)
  })
}

/** The built server on a free loopback port against the bench database; nodeArgs e.g. --cpu-prof. */
export async function startBenchServer(db: string, nodeArgs: string[] = []): Promise<RunningServer> {
  const entry = path.join(OUTPUT, 'server/index.mjs')
  if (!existsSync(entry)) throw new Error('no build: run `npx nuxt build` (bench/run.sh does) first')
  const port = await freePort()
  let out = ''
  const child = spawn(process.execPath, [...nodeArgs, entry], {
    cwd: ROOT,
    env: {
      ...process.env, HOST: '127.0.0.1', PORT: String(port), DATABASE_URL: dbUrl(db), NODE_ENV: 'production', NUXT_TRUST_PROXY: '1',
      // a fresh sealing key per run: sessions from an earlier run mean nothing
      NUXT_SESSION_PASSWORD: `bench-${randomBytes(24).toString('hex')}`,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  child.stdout!.on('data', (d) => (out += d))
  child.stderr!.on('data', (d) => (out += d))
  const url = `http://127.0.0.1:${port}`
  const deadline = Date.now() + 60_000
  for (;;) {
    if (child.exitCode !== null) throw new Error(`the server exited early:\n${out}`)
    try {
      if ((await fetch(`${url}/api/health`)).ok) break
    } catch { /* not up yet */ }
    if (Date.now() > deadline) throw new Error(`the server did not answer within 60 s:\n${out}`)
    await new Promise((r) => setTimeout(r, 100))
  }
  const stop = () => new Promise<void>((resolve) => {
    if (child.exitCode !== null) return resolve()
    child.once('exit', () => resolve())
    child.kill('SIGTERM')
    setTimeout(() => child.kill('SIGKILL'), 10_000).unref()
  })
  // with --inspect=127.0.0.1:0 node names its inspector's address on stderr
  const inspector = out.match(/Debugger listening on (ws:\/\/127\.0\.0\.1:\d+\/[\w-]+)/)?.[1] ?? null
  return { url, pid: child.pid!, child, stop, output: () => out, inspector }
}

export interface Session { cookie: string; csrf: string }

/** Sign in as a person's device does: CSRF cookie first (GET /api/health), then the form post. */
export async function signIn(url: string, email: string, password: string): Promise<Session> {
  const c = new Client(url)
  await c.login(email, password)
  const csrf = c.getCookie('isthmus-csrf')
  if (!csrf) throw new Error('no isthmus-csrf cookie after sign-in')
  return { cookie: c.cookieHeader(), csrf }
}

/** utime + stime of a process in ms (Linux /proc). */
export function cpuMs(pid: number): number | null {
  try {
    const f = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]!.split(' ')
    return ((Number(f[11]) + Number(f[12])) * 1000) / 100 // clock ticks are 100 Hz on Linux
  } catch {
    return null
  }
}

type Req = { method?: string; path?: string; headers?: Record<string, string>; body?: string }

async function cannon(o: {
  url: string; connections: number; seconds: number; serverPid?: number
  setup: (req: Req, ctx: Record<string, any>) => Req
  onResponse?: (status: number, body: string, ctx: Record<string, any>) => void
}): Promise<ApiResult> {
  const lat: number[] = []
  const statuses: Record<string, number> = {}
  const cpu0 = o.serverPid ? cpuMs(o.serverPid) : null
  const inst = autocannon({
    url: o.url, connections: o.connections, duration: o.seconds, timeout: 20,
    requests: [{ setupRequest: o.setup, onResponse: o.onResponse }],
  } as any)
  inst.on('response', (_client: unknown, status: number, _bytes: number, ms: number) => {
    lat.push(ms)
    statuses[status] = (statuses[status] ?? 0) + 1
  })
  const r: any = await inst
  const cpu1 = o.serverPid ? cpuMs(o.serverPid) : null
  const sorted = Float64Array.from(lat).sort()
  const samples = sorted
  const ok = Object.entries(statuses).filter(([s]) => s.startsWith('2')).reduce((a, [, n]) => a + n, 0)
  const seconds = Number(r.duration) || o.seconds
  return {
    connections: o.connections, seconds,
    requests: lat.length, ok, rps: ok / seconds,
    non2xx: lat.length - ok, errors: Number(r.errors) || 0, timeouts: Number(r.timeouts) || 0, statuses,
    latencyMs: {
      mean: lat.reduce((a, b) => a + b, 0) / (lat.length || 1),
      p50: percentile(sorted, 50), p95: percentile(sorted, 95), p99: percentile(sorted, 99), max: sorted[sorted.length - 1] ?? NaN,
    },
    serverCpuMsPerRequest: cpu0 != null && cpu1 != null && lat.length ? (cpu1 - cpu0) / lat.length : null,
    samples,
  }
}

/** GET /api/trace?lot=… for lots picked at random from the same set the pgbench scripts use. */
export function lotSearchLoad(url: string, session: Session, lots: string[], connections: number, seconds: number, serverPid?: number) {
  return cannon({
    url, connections, seconds, serverPid,
    setup: (req) => ({
      ...req, method: 'GET', path: `/api/trace?lot=${encodeURIComponent(lots[Math.floor(Math.random() * lots.length)]!)}`,
      headers: { cookie: session.cookie, accept: 'application/json' },
    }),
  })
}

const GS = '\u001D'

/**
 * POST /api/cases/:id/items, one wedge scan per request with its own client key and serial. Each request
 * takes a case nobody else is scanning into right now (as 50 devices in 50 theatres would) and gives it
 * back with its answer.
 */
export async function ingestLoad(url: string, sessions: Map<number, Session>, cases: BenchCase[], connections: number, seconds: number, serverPid?: number) {
  const free = cases.map((_, i) => i)
  const results: Record<string, number> = {}
  let serial = 0
  let shared = 0
  const run = randomBytes(2).toString('hex').toUpperCase()
  const r = await cannon({
    url, connections, seconds, serverPid,
    setup: (req, ctx) => {
      let k = free.pop()
      if (k === undefined) { k = Math.floor(Math.random() * cases.length); shared++ } // only if requests were lost (timeouts)
      ctx.k = k
      const c = cases[k]!
      const s = sessions.get(c.facilityId)!
      const exp = c.expiry.slice(2, 4) + c.expiry.slice(5, 7) + c.expiry.slice(8, 10)
      const scan = `]d201${c.gtin}17${exp}10${c.lot}${GS}21A${run}${String(++serial).padStart(9, '0')}`
      return {
        ...req, method: 'POST', path: `/api/cases/${c.caseId}/items`,
        headers: { cookie: s.cookie, 'x-csrf-token': s.csrf, 'content-type': 'application/json', accept: 'application/json' },
        body: JSON.stringify({ scan, source: 'wedge', disposition: 'implanted', clientKey: randomUUID() }),
      }
    },
    onResponse: (status, body, ctx) => {
      if (ctx.k !== undefined) { free.push(ctx.k); ctx.k = undefined }
      let result = `http ${status}`
      try { result = JSON.parse(body).result ?? result } catch { /* not JSON */ }
      results[result] = (results[result] ?? 0) + 1
    },
  })
  r.results = results
  if (shared) r.notes = [`${shared} requests had to share a case (earlier requests timed out)`]
  return r
}
