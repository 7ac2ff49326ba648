// Where things are: the repository, PostgreSQL's binaries, the local cluster (scripts/db.sh), work files.
import { spawn, spawnSync } from 'node:child_process'
import { existsSync, mkdirSync, readdirSync } from 'node:fs'
import path from 'node:path'
import pg from 'pg'

export const ROOT = path.resolve(import.meta.dirname, '../..')
export const BENCH = path.join(ROOT, 'bench')
// .cache/ is git-ignored at every depth, so work files never end up in a commit
export const WORK = path.join(BENCH, '.cache')
mkdirSync(WORK, { recursive: true })
// The build under test: bench/run.sh copies .output here first, so a rebuild by someone else during the
// run cannot swap the server's files underneath it.
export const OUTPUT = process.env.BENCH_OUTPUT ? path.resolve(process.env.BENCH_OUTPUT) : path.join(ROOT, '.output')

export const PG_HOST = '127.0.0.1'
export const PG_PORT = Number(process.env.PGPORT_LOCAL || 54329)
export const PG_USER = 'postgres'

export function dbUrl(db: string): string {
  return `postgres://${PG_USER}@${PG_HOST}:${PG_PORT}/${db}`
}

/** The newest /usr/lib/postgresql/N/bin that has the tool, or PG_BIN when set. */
export function pgBin(tool: 'psql' | 'pgbench'): string {
  if (process.env.PG_BIN) return path.join(process.env.PG_BIN, tool)
  const base = '/usr/lib/postgresql'
  const versions = existsSync(base) ? readdirSync(base).filter((v) => /^\d+$/.test(v)).sort((a, b) => Number(b) - Number(a)) : []
  for (const v of versions) {
    const p = path.join(base, v, 'bin', tool)
    if (existsSync(p)) return p
  }
  throw new Error(`${tool} not found under ${base}/*/bin: install PostgreSQL (bash scripts/db.sh start does) or set PG_BIN`)
}

export function connArgs(db: string): string[] {
  return ['-h', PG_HOST, '-p', String(PG_PORT), '-U', PG_USER, '-d', db]
}

export async function withClient<T>(db: string, fn: (c: pg.Client) => Promise<T>): Promise<T> {
  const c = new pg.Client({ connectionString: dbUrl(db) })
  await c.connect()
  try {
    return await fn(c)
  } finally {
    await c.end()
  }
}

/** Run a command, fail with its output when it fails. */
export function run(cmd: string, args: string[], opts: { env?: Record<string, string>; cwd?: string } = {}): string {
  const r = spawnSync(cmd, args, { cwd: opts.cwd ?? ROOT, env: { ...process.env, ...opts.env }, encoding: 'utf8', maxBuffer: 64 << 20 })
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} failed (${r.status ?? r.signal}):\n${r.stdout}\n${r.stderr}`)
  return r.stdout
}

/** Like run(), without blocking the event loop (so timers and other work go on). */
export function runAsync(cmd: string, args: string[], opts: { env?: Record<string, string>; cwd?: string } = {}): Promise<string> {
  return new Promise((resolve, reject) => {
    const child = spawn(cmd, args, { cwd: opts.cwd ?? ROOT, env: { ...process.env, ...opts.env }, stdio: ['ignore', 'pipe', 'pipe'] })
    let out = ''
    let err = ''
    child.stdout.on('data', (d) => (out += d))
    child.stderr.on('data', (d) => (err += d))
    child.on('error', reject)
    child.on('close', (code) => {
      if (code === 0) resolve(out + err)
      else reject(new Error(`${cmd} ${args.join(' ')} failed (${code}):\n${out}\n${err}`))
    })
  })
}

export function log(part: string, msg: string) {
  const t = new Date().toISOString().slice(11, 19)
  console.log(`[bench ${t}] ${part}: ${msg}`)
}

export function percentile(sorted: ArrayLike<number>, p: number): number {
  if (!sorted.length) return NaN
  // nearest-rank: the smallest value with at least p % of the samples at or below it
  const rank = Math.max(1, Math.ceil((p / 100) * sorted.length))
  return sorted[Math.min(sorted.length, rank) - 1]!
}

export function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b)
  if (!s.length) return NaN
  const m = s.length >> 1
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2
}

export const round = (x: number, digits = 2) => (Number.isFinite(x) ? Number(x.toFixed(digits)) : x)
