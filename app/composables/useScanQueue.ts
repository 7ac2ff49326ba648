// Scans leave the device through this queue: each keeps its clientKey until the server has answered, is
// stored on the device in IndexedDB (it survives a reload, a crash of the tab or a dropped Wi-Fi), and is
// re-sent when the network is back. The server answers the same key once, so a scan lands exactly once.
import { createStore, del, entries, set } from 'idb-keyval'
import { csrfHeaders } from '~/utils/csrf'

export interface QueuedScan { caseId: number; body: Record<string, unknown> & { clientKey: string }; queuedAt: number }
export interface ScanAnswer { caseId: number; clientKey: string; status: number; body: any }

const listeners = new Set<(a: ScanAnswer) => void>()
let store: ReturnType<typeof createStore> | null = null
let flushing = false
let again = false
let started = false

function db() {
  store ??= createStore('isthmus', 'scan-queue')
  return store
}
async function load(): Promise<QueuedScan[]> {
  const all = await entries<string, QueuedScan>(db())
  return all.map(([, v]) => v).sort((a, b) => a.queuedAt - b.queuedAt)
}
async function count() {
  useState<number>('pending-count').value = (await load()).length
}

async function flush(): Promise<void> {
  if (flushing) { again = true; return }
  flushing = true
  try {
    do {
      again = false
      for (const next of await load()) {
        let answer: ScanAnswer
        try {
          const res = await fetch(`/api/cases/${next.caseId}/items`, {
            method: 'POST',
            headers: { 'content-type': 'application/json', accept: 'application/json', ...csrfHeaders() },
            body: JSON.stringify(next.body),
          })
          // keep it and try again later: the server is down, restarting, or the person must sign in again
          if (res.status >= 500 || res.status === 401 || res.status === 429) return
          // no security token yet (a fresh tab, cleared cookies): fetch one and send again later, never drop
          if (res.status === 403 && !csrfHeaders()['x-csrf-token']) { await fetch('/api/health').catch(() => {}); return }
          answer = { caseId: next.caseId, clientKey: next.body.clientKey, status: res.status, body: await res.json().catch(() => ({})) }
        } catch {
          return // offline: the queue stays as it is
        }
        await del(next.body.clientKey, db())
        await count()
        for (const l of listeners) l(answer)
      }
    } while (again)
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
    void count()
    if (!started) {
      started = true
      window.addEventListener('online', () => void flush())
      setInterval(() => void flush(), 5000)
    }
    void flush()
  })
  async function enqueue(caseId: number, body: Record<string, unknown>) {
    const entry: QueuedScan = { caseId, body: { ...body, clientKey: crypto.randomUUID() }, queuedAt: Date.now() }
    await set(entry.body.clientKey, entry, db())
    await count()
    void flush()
    return entry.body.clientKey
  }
  return { enqueue, onAnswer: mine, pending, flush, queued: load }
}
