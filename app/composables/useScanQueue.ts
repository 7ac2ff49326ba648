// Scans and readings leave the device through this queue: each keeps its clientKey until the server has
// answered, is stored on the device in IndexedDB (it survives a reload, a crash of the tab or a dropped
// Wi-Fi), and is re-sent when the network is back. The server answers the same key once, so each lands
// exactly once. A reading the server refuses later (the case was closed meanwhile) stays on the device,
// held with the server's words, until the person has seen it and dismissed it: nothing is dropped unseen.
import { createStore, del, entries, set } from 'idb-keyval'
import { storeToRefs } from 'pinia'
import { csrfHeaders } from '~/utils/csrf'
import { useDeviceQueueStore } from '~/stores/deviceQueue'

export type QueuedKind = 'scan' | 'reading'
export interface QueuedCapture {
  caseId: number
  /** absent in entries queued before readings joined the queue: those are scans */
  kind?: QueuedKind
  body: Record<string, unknown> & { clientKey: string }
  queuedAt: number
  /** the server's refusal of a reading that was sent while nobody watched */
  held?: { status: number; message: string; at: number }
}
export interface QueueAnswer { caseId: number; kind: QueuedKind; clientKey: string; status: number; body: any }

const PATHS: Record<QueuedKind, (caseId: number) => string> = {
  scan: (id) => `/api/cases/${id}/items`,
  reading: (id) => `/api/cases/${id}/readings`,
}

const listeners = new Set<(a: QueueAnswer) => void>()
let store: ReturnType<typeof createStore> | null = null
let flushing = false
let again = false
let started = false

function db() {
  store ??= createStore('isthmus', 'scan-queue')
  return store
}
async function load(): Promise<QueuedCapture[]> {
  const all = await entries<string, QueuedCapture>(db())
  return all.map(([, v]) => v).sort((a, b) => a.queuedAt - b.queuedAt)
}
async function count() {
  useDeviceQueueStore().mirror(await load())
}

function messageOf(body: any): string {
  const field = Object.values(body?.data?.fields ?? {})[0]
  return (typeof field === 'string' && field) || body?.message || 'The server did not accept it.'
}

async function flush(): Promise<void> {
  if (flushing) { again = true; return }
  flushing = true
  try {
    do {
      again = false
      for (const next of await load()) {
        if (next.held) continue
        const kind = next.kind ?? 'scan'
        let answer: QueueAnswer
        try {
          const res = await fetch(PATHS[kind](next.caseId), {
            method: 'POST',
            headers: { 'content-type': 'application/json', accept: 'application/json', ...csrfHeaders() },
            body: JSON.stringify(next.body),
          })
          // keep it and try again later: the server is down, restarting, or the person must sign in again
          if (res.status >= 500 || res.status === 401 || res.status === 429) return
          // no security token yet (a fresh tab, cleared cookies): fetch one and send again later, never drop
          if (res.status === 403 && !csrfHeaders()['x-csrf-token']) { await fetch('/api/health').catch(() => {}); return }
          answer = { caseId: next.caseId, kind, clientKey: next.body.clientKey, status: res.status, body: await res.json().catch(() => ({})) }
        } catch {
          return // offline: the queue stays as it is
        }
        // a scan's answer, refusals too, is the scan's record on the server (scan_events); a refused
        // reading exists nowhere else, so it waits here until someone has read why
        if (kind === 'reading' && answer.status >= 400) {
          await set(next.body.clientKey, { ...next, held: { status: answer.status, message: messageOf(answer.body), at: Date.now() } }, db())
        } else {
          await del(next.body.clientKey, db())
        }
        await count()
        for (const l of listeners) l(answer)
      }
    } while (again)
  } finally {
    flushing = false
  }
}

export function useScanQueue() {
  const { pending, entries: queued } = storeToRefs(useDeviceQueueStore())
  const mine = (fn: (a: QueueAnswer) => void) => {
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
  async function enqueue(caseId: number, body: Record<string, unknown>, kind: QueuedKind = 'scan', opts: { send?: boolean } = {}) {
    const clientKey = typeof body.clientKey === 'string' ? body.clientKey : crypto.randomUUID()
    const entry: QueuedCapture = { caseId, kind, body: { ...body, clientKey }, queuedAt: Date.now() }
    await set(clientKey, entry, db())
    await count()
    if (opts.send !== false) void flush()
    return clientKey
  }
  /**
   * Queue it and send it now: the server's answer, or null when it stays queued on the device (offline,
   * server restarting) and will be sent by itself later. An answer returned here is shown by the
   * caller, so it is not held.
   */
  async function submit(caseId: number, kind: QueuedKind, body: Record<string, unknown>, waitMs = 8000): Promise<QueueAnswer | null> {
    const clientKey = typeof body.clientKey === 'string' ? body.clientKey : crypto.randomUUID()
    let settle: (a: QueueAnswer | null) => void = () => {}
    const answered = new Promise<QueueAnswer | null>((resolve) => { settle = resolve })
    const listener = (a: QueueAnswer) => { if (a.clientKey === clientKey) settle(a) }
    listeners.add(listener)
    const timer = setTimeout(() => settle(null), waitMs)
    try {
      await enqueue(caseId, { ...body, clientKey }, kind, { send: false })
      const ranHere = !flushing
      await flush()
      // our own flush went through the whole queue: still there means it could not be sent now.
      // (When another flush was running, it takes ours on its next pass; wait for it, up to waitMs.)
      if (ranHere && (await load()).some((e) => e.body.clientKey === clientKey && !e.held)) settle(null)
      const a = await answered
      if (a && a.status >= 400) await dismiss(clientKey)
      return a
    } finally {
      clearTimeout(timer)
      listeners.delete(listener)
    }
  }
  async function dismiss(clientKey: string) {
    await del(clientKey, db())
    await count()
  }
  return { enqueue, submit, dismiss, onAnswer: mine, pending, queued, flush }
}
