// V8 CPU profiles (node:inspector or --cpu-prof) summed up by self time: which package or project file,
// and which functions, the CPU went to. That, not a guess, is what the report names as slow.

export interface CpuProfile {
  nodes: { id: number; callFrame: { functionName: string; url: string; lineNumber: number } }[]
  samples: number[]
  timeDeltas: number[]
}

export interface ProfileSummary {
  sampledMs: number
  byPackage: { name: string; share: number; ms: number }[]
  byFunction: { name: string; share: number; ms: number }[]
}

function where(url: string): string {
  if (!url) return '(native code, GC)'
  const nm = url.match(/node_modules\/((?:@[^/]+\/)?[^/]+)/)
  if (nm) return nm[1]!
  if (url.startsWith('node:')) return 'node (core)'
  const out = url.match(/\.output\/server\/(.*)$/)
  if (out) return `built server: ${out[1]}`
  const m = url.match(/\/(server|shared|bench|db)\/(.*)$/)
  return m ? `${m[1]}/${m[2]}` : url.replace(/^file:\/\//, '')
}

/** Self time by package and by function; `skipIdle` leaves out the event loop's waiting. */
export function summarizeProfile(p: CpuProfile, opts: { skipIdle?: boolean; top?: number } = {}): ProfileSummary {
  const byNode = new Map<number, number>()
  p.samples.forEach((id, i) => byNode.set(id, (byNode.get(id) ?? 0) + Math.max(0, p.timeDeltas[i] ?? 0)))
  const pkg = new Map<string, number>()
  const fn = new Map<string, number>()
  let total = 0
  for (const n of p.nodes) {
    const t = byNode.get(n.id)
    if (!t) continue
    if (opts.skipIdle && ['(idle)', '(program)'].includes(n.callFrame.functionName)) continue
    total += t
    const w = where(n.callFrame.url)
    pkg.set(w, (pkg.get(w) ?? 0) + t)
    const name = `${n.callFrame.functionName || '(anonymous)'} (${w}${n.callFrame.url ? `:${n.callFrame.lineNumber + 1}` : ''})`
    fn.set(name, (fn.get(name) ?? 0) + t)
  }
  const k = opts.top ?? 10
  const top = (m: Map<string, number>) => [...m].sort((a, b) => b[1] - a[1]).slice(0, k)
    .map(([name, us]) => ({ name, share: Number((us / (total || 1)).toFixed(3)), ms: Math.round(us / 1000) }))
  return { sampledMs: Math.round(total / 1000), byPackage: top(pkg), byFunction: top(fn) }
}
