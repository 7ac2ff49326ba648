// The machine the figures come from, and how busy other work kept it while they were taken: on a shared
// machine a figure means little without that.
import { readdirSync, readFileSync } from 'node:fs'
import os from 'node:os'
import { pgBin, run, withClient } from './env'

export async function describeMachine(db: string) {
  const cpuinfo = readFileSync('/proc/cpuinfo', 'utf8')
  const model = cpuinfo.match(/model name\s*:\s*(.+)/)?.[1]?.trim() ?? os.cpus()[0]?.model ?? 'unknown'
  const osRelease = (() => {
    try { return readFileSync('/etc/os-release', 'utf8').match(/PRETTY_NAME="(.+)"/)?.[1] ?? 'Linux' } catch { return os.type() }
  })()
  const pg = await withClient(db, async (c) => {
    const v = (await c.query('SELECT version()')).rows[0].version as string
    const settings = (await c.query(`SELECT name, setting, unit FROM pg_settings WHERE name IN
      ('shared_buffers', 'work_mem', 'fsync', 'synchronous_commit', 'max_connections', 'wal_sync_method', 'effective_cache_size', 'max_wal_size', 'jit')`)).rows
    return { version: v, settings: Object.fromEntries(settings.map((s) => [s.name, s.unit ? `${s.setting} × ${s.unit}` : s.setting])) }
  })
  return {
    cpu: model, cores: os.cpus().length, memoryGiB: Number((os.totalmem() / 2 ** 30).toFixed(1)), os: `${osRelease}, kernel ${os.release()}`,
    node: process.version, postgres: pg.version, pgbench: run(pgBin('pgbench'), ['--version']).trim(), postgresSettings: pg.settings,
    serverPool: `DATABASE_POOL_MAX=${process.env.DATABASE_POOL_MAX || '20 (default)'}`,
  }
}

function procTable(): Map<number, { ppid: number; ticks: number; comm: string }> {
  const out = new Map<number, { ppid: number; ticks: number; comm: string }>()
  for (const d of readdirSync('/proc')) {
    if (!/^\d+$/.test(d)) continue
    try {
      const s = readFileSync(`/proc/${d}/stat`, 'utf8')
      const comm = s.slice(s.indexOf('(') + 1, s.lastIndexOf(')'))
      const f = s.slice(s.lastIndexOf(')') + 2).split(' ')
      out.set(Number(d), { ppid: Number(f[1]), ticks: Number(f[11]) + Number(f[12]), comm })
    } catch { /* gone */ }
  }
  return out
}

/**
 * Samples, every few seconds, how many cores processes outside this benchmark used: not this process
 * or its children (server, pgbench, psql, chromium). PostgreSQL serves both: its backends for other
 * databases count as other work, its shared processes as neither. Each part reads the mean over its span.
 */
export class LoadSampler {
  private last = procTable()
  private lastAt = Date.now()
  private samples: { at: number; foreignCores: number; top: string[] }[] = []
  private timer: NodeJS.Timeout

  constructor(private db: string, intervalMs = 3000) {
    this.timer = setInterval(() => this.sample(), intervalMs)
    this.timer.unref()
  }

  private ours(table: Map<number, { ppid: number }>, pid: number): boolean {
    for (let p = pid, i = 0; p > 1 && i < 64; i++) {
      if (p === process.pid) return true
      p = table.get(p)?.ppid ?? 0
    }
    return false
  }

  sample() {
    const now = procTable()
    const at = Date.now()
    const secs = (at - this.lastAt) / 1000
    let foreign = 0
    const users = new Map<string, number>()
    for (const [pid, p] of now) {
      const before = this.last.get(pid)
      const d = p.ticks - (before?.ticks ?? p.ticks)
      if (d <= 0 || this.ours(now, pid)) continue
      let name = p.comm
      if (p.comm === 'postgres') {
        // a backend's title is "postgres: user database host …"; shared processes have other titles
        let title = ''
        try { title = readFileSync(`/proc/${pid}/cmdline`, 'utf8').replace(/\0/g, ' ') } catch { continue }
        const db = title.match(/^postgres: \S+ (\S+) (?:\d|\[local\])/)?.[1]
        if (!db || db === this.db) continue
        name = 'postgres (other databases)'
      }
      foreign += d
      users.set(name, (users.get(name) ?? 0) + d)
    }
    const cores = foreign / 100 / secs
    const top = [...users].sort((a, b) => b[1] - a[1]).slice(0, 3).filter(([, t]) => t / 100 / secs > 0.05)
      .map(([c, t]) => `${c} ${(t / 100 / secs).toFixed(2)}`)
    this.samples.push({ at, foreignCores: cores, top })
    this.last = now
    this.lastAt = at
  }

  /** Mean foreign cores between two instants, with the busiest foreign commands seen. */
  span(from: number, to: number) {
    const s = this.samples.filter((x) => x.at > from && x.at <= to + 3000)
    if (!s.length) return { foreignCores: null as number | null, busiest: [] as string[], loadAvg: os.loadavg()[0]! }
    const busiest = new Map<string, number>()
    for (const x of s) for (const t of x.top) { const c = t.replace(/ [\d.]+$/, ''); busiest.set(c, (busiest.get(c) ?? 0) + 1) }
    return {
      foreignCores: Number((s.reduce((a, x) => a + x.foreignCores, 0) / s.length).toFixed(2)),
      busiest: [...busiest].sort((a, b) => b[1] - a[1]).slice(0, 3).map(([c]) => c),
      loadAvg: Number(os.loadavg()[0]!.toFixed(2)),
    }
  }

  stop() {
    clearInterval(this.timer)
  }
}

function ticksOf(pid: number): number | null {
  try {
    const s = readFileSync(`/proc/${pid}/stat`, 'utf8')
    const f = s.slice(s.lastIndexOf(')') + 2).split(' ')
    return Number(f[11]) + Number(f[12])
  } catch {
    return null
  }
}

/** utime+stime of this process and of its waited-for children (pgbench, psql), in ms. */
function selfTicks(): { own: number; children: number } {
  const f = readFileSync('/proc/self/stat', 'utf8').split(') ')[1]!.split(' ')
  return { own: (Number(f[11]) + Number(f[12])) * 10, children: (Number(f[13]) + Number(f[14])) * 10 }
}

/**
 * CPU used during a run by PostgreSQL for this database (its backends, found by their process title,
 * plus the WAL writer), by this process (autocannon runs in it), by its finished children (pgbench)
 * and by given pids (the app server). Backends come and go with their clients, so they are sampled
 * every 250 ms and each counts from when it was first seen.
 */
export class CpuMeter {
  private seen = new Map<number, { first: number; last: number }>()
  private timer: NodeJS.Timeout
  private self0 = selfTicks()
  private pids0: Map<number, number>

  constructor(private db: string, private pids: number[] = []) {
    this.pids0 = new Map(pids.map((p) => [p, ticksOf(p) ?? 0]))
    this.scan(true)
    this.timer = setInterval(() => this.scan(false), 250)
    this.timer.unref()
  }

  private scan(initial: boolean) {
    for (const d of readdirSync('/proc')) {
      if (!/^\d+$/.test(d)) continue
      const pid = Number(d)
      let title: string
      try { title = readFileSync(`/proc/${d}/cmdline`, 'utf8').replace(/\0/g, ' ') } catch { continue }
      if (!title.startsWith('postgres:') || !(title.includes(` ${this.db} `) || title.includes('walwriter'))) continue
      const t = ticksOf(pid)
      if (t == null) continue
      const s = this.seen.get(pid)
      // a backend already running when the meter started counts from then; a new one from zero
      if (!s) this.seen.set(pid, { first: initial ? t : 0, last: t })
      else s.last = t
    }
  }

  stop() {
    this.scan(false)
    clearInterval(this.timer)
    const self1 = selfTicks()
    let pg = 0
    for (const s of this.seen.values()) pg += (s.last - s.first) * 10
    const pids: Record<number, number> = {}
    for (const p of this.pids) pids[p] = ((ticksOf(p) ?? 0) - (this.pids0.get(p) ?? 0)) * 10
    return { postgresMs: pg, harnessMs: self1.own - this.self0.own, childrenMs: self1.children - this.self0.children, pidsMs: pids }
  }
}
