import type { User } from '#auth-utils'
import { sql, type Expression, type ExpressionBuilder, type SqlBool } from 'kysely'
import type { Database } from '../../db/types'
import type { TraceQuery } from '../../shared/schemas/trace'
import type { Db } from '../utils/db'

const like = (s: string) => `${s.replace(/[\\%_]/g, (c) => `\\${c}`)}%`

/**
 * Implant rows matching a trace query, as the person may see them: coordinators and admins within their
 * facility (everything when they work group-wide), surgeons only their own patients.
 * Uses the lot/serial (text_pattern_ops) and DI indexes on case_items for exact and prefix matches.
 */
export function traceRows(db: Db, q: TraceQuery, user: User) {
  return db.selectFrom('case_items as i')
    .innerJoin('cases as c', 'c.id', 'i.case_id')
    .innerJoin('patients as p', 'p.id', 'c.patient_id')
    .innerJoin('users as s', 's.id', 'c.surgeon_id')
    .innerJoin('facilities as f', 'f.id', 'c.facility_id')
    .leftJoin('catalog_items as ci', 'ci.id', 'i.item_id')
    .where((eb) => traceFilters(eb, q, user))
}

/**
 * The same rows, counted, with only the joins a filter needs (every item has its case, patient and
 * surgeon, so the other joins cannot change the count): a group-wide lot count reads the lot index alone.
 */
function traceCount(db: Db, q: TraceQuery, user: User) {
  const n = sql<number>`count(*)::int`.as('n')
  const items = db.selectFrom('case_items as i').where((eb) => itemFilters(eb, q))
  if (!needsCase(q, user)) return items.select(n)
  return items.innerJoin('cases as c', 'c.id', 'i.case_id').innerJoin('facilities as f', 'f.id', 'c.facility_id')
    .where((eb) => caseFilters(eb, q, user)).select(n)
}

type TraceTables = { i: Database['case_items']; c: Database['cases']; f: Database['facilities'] }

function traceFilters(eb: ExpressionBuilder<TraceTables, 'i' | 'c' | 'f'>, q: TraceQuery, user: User) {
  return eb.and([itemFilters(eb, q), caseFilters(eb, q, user)])
}

function itemFilters(eb: ExpressionBuilder<Pick<TraceTables, 'i'>, 'i'>, q: TraceQuery) {
  const on: Expression<SqlBool>[] = []
  if (q.lot) on.push(q.lotMatch === 'prefix' ? eb('i.lot', 'like', like(q.lot)) : eb('i.lot', '=', q.lot))
  if (q.serial) on.push(q.serialMatch === 'prefix' ? eb('i.serial', 'like', like(q.serial)) : eb('i.serial', '=', q.serial))
  if (q.gtin) on.push(eb('i.di', '=', q.gtin.padStart(14, '0')))
  if (q.di) on.push(eb('i.di', '=', q.di))
  if (q.itemId) on.push(eb('i.item_id', '=', q.itemId))
  return eb.and(on)
}

function needsCase(q: TraceQuery, user: User): boolean {
  return !!(q.from || q.to || q.surgeonId || user.role === 'surgeon' || user.facilityId || q.facilityId)
}

function caseFilters(eb: ExpressionBuilder<TraceTables, 'i' | 'c' | 'f'>, q: TraceQuery, user: User) {
  const on: Expression<SqlBool>[] = []
  if (q.from) on.push(sql<boolean>`(i.recorded_at AT TIME ZONE f.time_zone)::date >= ${q.from}::date`)
  if (q.to) on.push(sql<boolean>`(i.recorded_at AT TIME ZONE f.time_zone)::date <= ${q.to}::date`)
  if (q.surgeonId) on.push(eb('c.surgeon_id', '=', q.surgeonId))
  if (user.role === 'surgeon') on.push(eb('c.surgeon_id', '=', user.id))
  if (user.facilityId) on.push(eb('c.facility_id', '=', user.facilityId))
  else if (q.facilityId) on.push(eb('c.facility_id', '=', q.facilityId))
  return eb.and(on)
}

const SORT = {
  date: 'i.recorded_at', mrn: 'p.mrn', lot: 'i.lot', serial: 'i.serial', surgeon: 's.name', item: 'ci.description',
} as const

export async function traceSearch(db: Db, q: TraceQuery, user: User, opts: { all?: boolean } = {}) {
  let query = traceRows(db, q, user).select([
    'i.id', 'i.case_id', 'i.di', 'i.lot', 'i.serial', 'i.expiry', 'i.disposition', 'i.recorded_at',
    'p.id as patient_id', 'p.mrn', 'p.family_name', 'p.given_name', 'p.birth_date',
    'c.scheduled_at', 'c.side', 's.id as surgeon_id', 's.name as surgeon_name', 'f.name as facility_name', 'f.time_zone',
    'ci.description', 'ci.reference',
  ]).orderBy(sql.ref(SORT[q.sort]), q.dir).orderBy('i.id', q.dir)
  query = opts.all ? query.limit(100_000) : query.limit(q.pageSize).offset((q.page - 1) * q.pageSize)
  const rows = await query.execute()
  // A first page that is not full is the whole answer; otherwise count apart, which is cheaper than
  // count(*) OVER () — that makes PostgreSQL join and sort every matching row before the LIMIT.
  const whole = opts.all || (q.page === 1 && rows.length < q.pageSize)
  const total = whole ? rows.length : (await traceCount(db, q, user).executeTakeFirstOrThrow()).n
  return { rows, total }
}

/** Every search that shows patient data is logged: who, when, the query, how many patients. */
export async function logPhiAccess(db: Db, user: User, action: string, query: unknown, patients: number, rows: number) {
  await db.insertInto('phi_access_log').values({ user_id: user.id, action, query: JSON.stringify(query), patients, rows }).execute()
}
