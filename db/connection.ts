import pg from 'pg'
import { Kysely, PostgresDialect } from 'kysely'
import type { Database } from './types'

// int8 (bigint ids, counts) as JS numbers: our ids stay far below 2^53. numeric stays a string for decimal.js.
pg.types.setTypeParser(20, (v) => Number.parseInt(v, 10))
// date columns as plain 'YYYY-MM-DD' strings: a calendar date has no time zone.
pg.types.setTypeParser(1082, (v) => v)

export const DEFAULT_DATABASE_URL = 'postgres://postgres@127.0.0.1:54329/isthmus'

export function databaseUrl(): string {
  return process.env.DATABASE_URL || DEFAULT_DATABASE_URL
}

export function createPool(url = databaseUrl(), max = Number(process.env.DATABASE_POOL_MAX || 20)): pg.Pool {
  const pool = new pg.Pool({ connectionString: url, max, idleTimeoutMillis: 30_000 })
  // An idle connection dies when PostgreSQL restarts; the pool drops it and opens a new one on the next
  // query. Without a listener that error would end the process.
  pool.on('error', (e) => console.warn(`[db] idle connection lost: ${e.message}`))
  return pool
}

export function createDb(url = databaseUrl(), pool = createPool(url)): Kysely<Database> {
  return new Kysely<Database>({ dialect: new PostgresDialect({ pool }) })
}
