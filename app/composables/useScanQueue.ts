// Scans leave the device through this queue: each keeps its clientKey until the server has answered, is
// stored on the device (it survives a reload or a dropped Wi-Fi), and is re-sent when the network is
// back. The server answers the same key once, so a scan lands exactly once.
export interface QueuedScan { caseId: number; body: Record<string, unknown> & { clientKey: string }; queuedAt: number }
export interface ScanAnswer { caseId: number; clientKey: string; status: number; body: any }

const KEY = 'isthmus-scan-queue'
const listeners = new Set<(a: ScanAnswer) => void>()
let flushing = false
let started = false

function load(): QueuedScan[] {
  try { return JSON.parse(localStorage.getItem(KEY) ?? '[]') as QueuedScan[] } catch { return [] }
}
function save(q: QueuedScan[]) {
  localStorage.setItem(KEY, JSON.stringify(q))
  useState<number>('pending-count').value = q.length
}

async function flush() {
  if (flushing) return
  flushing = true
  try {
    for (;;) {
      const q = load()
      const next = q[0]
      if (!next) break
      let answer: ScanAnswer
      try {
        const res = await fetch(`/api/cases/${next.caseId}/items`, {
          method: 'POST', headers: { 'content-type': 'application/json', accept: 'application/json' }, body: JSON.stringify(next.body),
        })
        if (res.status >= 500 || res.status === 401 || res.status === 429) break // keep it; try again later (or after sign-in)
        answer = { caseId: next.caseId, clientKey: next.body.clientKey, status: res.status, body: await res.json().catch(() => ({})) }
      } catch {
        break // offline: keep the queue as it is
      }
      save(load().filter((x) => x.body.clientKey !== next.body.clientKey))
      for (const l of listeners) l(answer)
    }
  } finally {
    flushing = false
  }
}

export function useScanQueue() {
  const pending = useState<number>('pending-count', () => 0)
  const mine = (fn: (a: ScanAnswer) => void) => {
    onMounted(() => listeners.add(fn))
    onBeforeUnmount(() => listeners.delete(fn))
  }
  onMounted(() => {
    pending.value = load().length
    if (!started) {
      started = true
      window.addEventListener('online', () => void flush())
      setInterval(() => void flush(), 5000)
    }
    void flush()
  })
  function enqueue(caseId: number, body: Record<string, unknown>) {
    const entry: QueuedScan = { caseId, body: { ...body, clientKey: crypto.randomUUID() }, queuedAt: Date.now() }
    save([...load(), entry])
    void flush()
    return entry.body.clientKey
  }
  return { enqueue, onAnswer: mine, pending, flush, queued: () => load() }
}
