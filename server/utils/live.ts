// Live events across every app instance: writers NOTIFY inside their transaction (delivered on commit),
// each instance LISTENs on one dedicated connection and fans out to its own SSE streams.
import { EventEmitter } from 'node:events'
import pg from 'pg'
import { sql } from 'kysely'
import { databaseUrl } from '../../db/connection'
import type { Db } from './db'

export const CHANNEL = 'isthmus_events'
export interface LiveEvent { caseId: number; kind: 'item' | 'reading' | 'decision' | 'status'; id?: number }

const bus = new EventEmitter()
bus.setMaxListeners(0)
let listener: pg.Client | null = null
let connecting: Promise<void> | null = null
let retry: NodeJS.Timeout | null = null

async function connect(): Promise<void> {
  const client = new pg.Client({ connectionString: databaseUrl() })
  client.on('notification', (m) => {
    try { bus.emit('event', JSON.parse(m.payload ?? '{}') as LiveEvent) } catch { /* not ours */ }
  })
  // On a lost connection (database restart), reconnect and tell streams to resync.
  client.on('error', () => reconnectSoon())
  client.on('end', () => reconnectSoon())
  await client.connect()
  await client.query(`LISTEN ${CHANNEL}`)
  listener = client
  bus.emit('resync')
}

function reconnectSoon() {
  listener = null
  connecting = null
  if (retry || closed) return
  retry = setTimeout(() => { retry = null; void ensureListening().catch(() => reconnectSoon()) }, 1000)
}

let closed = false
export function ensureListening(): Promise<void> {
  if (listener) return Promise.resolve()
  connecting ??= connect().catch((e) => { connecting = null; throw e })
  return connecting
}

export async function stopListening() {
  closed = true
  if (retry) clearTimeout(retry)
  await listener?.end().catch(() => {})
  listener = null
}

export function onLive(fn: (e: LiveEvent) => void, onResync: () => void): () => void {
  bus.on('event', fn)
  bus.on('resync', onResync)
  return () => { bus.off('event', fn); bus.off('resync', onResync) }
}

/** Queue an event in the caller's transaction; PostgreSQL delivers it when the transaction commits. */
export async function notifyLive(db: Db, e: LiveEvent): Promise<void> {
  await sql`SELECT pg_notify(${CHANNEL}, ${JSON.stringify(e)})`.execute(db)
}
