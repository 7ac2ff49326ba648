// The lot search's SQL, taken from the app's own query code (server/queries/trace.ts) rather than copied
// by hand, so the pgbench baseline runs what GET /api/trace runs: the search, then the PHI access row.
import { Kysely, PostgresDialect, type CompiledQuery } from 'kysely'
import pg from 'pg'
import '../../db/connection' // the same type parsers as the server (int8 → number, date → text)
import { logPhiAccess, traceSearch } from '../../server/queries/trace'
import { TraceQuery } from '../../shared/schemas/trace'
import { dbUrl } from './env'

export interface SessionUser { id: number; name: string; email: string; role: 'coordinator'; facilityId: number | null; facilityName: string | null }
export interface CapturedSearch { lot: string; rows: number; total: number; patients: number; statements: { sql: string; parameters: readonly unknown[] }[] }

/** Run the API's search for each lot, as `user`, and keep the statements with their bound values. */
export async function captureTraceSearches(db: string, user: SessionUser, lots: string[]): Promise<CapturedSearch[]> {
  let seen: CompiledQuery[] = []
  const pool = new pg.Pool({ connectionString: dbUrl(db), max: 1 })
  const k = new Kysely<any>({
    dialect: new PostgresDialect({ pool }),
    log: (e) => { if (e.level === 'query') seen.push(e.query) },
  })
  const out: CapturedSearch[] = []
  try {
    for (const lot of lots) {
      seen = []
      // what the route does (server/api/trace/index.get.ts) with ?lot=…
      const q = TraceQuery.parse({ lot })
      const { rows, total } = await traceSearch(k as never, q, user as never)
      const patients = new Set(rows.map((r: { patient_id: number }) => r.patient_id)).size
      await logPhiAccess(k as never, user as never, 'trace.search', q, patients, rows.length)
      out.push({ lot, rows: rows.length, total, patients, statements: seen.map((s) => ({ sql: s.sql, parameters: s.parameters })) })
    }
  } finally {
    await k.destroy()
  }
  return out
}

function literal(v: unknown): string {
  if (v === null || v === undefined) return 'NULL'
  if (typeof v === 'number' || typeof v === 'bigint') return String(v)
  if (typeof v === 'boolean') return v ? 'true' : 'false'
  if (v instanceof Date) return `'${v.toISOString()}'`
  let s = String(v)
  // pgbench reads ":name" as a variable even inside a literal; JSON written with ": " stores the same jsonb
  if (/^[{[]/.test(s)) {
    try { s = JSON.stringify(JSON.parse(s)).replace(/":/g, '": ') } catch { /* not JSON */ }
  }
  return `'${s.replace(/'/g, "''")}'`
}

/** A pgbench script: the captured statements with their values inlined (one script per lot). */
export function pgbenchScript(statements: CapturedSearch['statements']): string {
  const lines = statements.map((s) => s.sql.replace(/\$(\d+)/g, (_, i) => literal(s.parameters[Number(i) - 1])).replace(/\s+/g, ' ') + ';')
  for (const l of lines) {
    if (/:[A-Za-z0-9_]/.test(l.replace(/::/g, ''))) throw new Error(`statement would be read by pgbench as using a variable: ${l.slice(0, 200)}`)
  }
  return lines.join('\n') + '\n'
}
