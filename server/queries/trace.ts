import type { User } from '#auth-utils'
import { sql } from 'kysely'
import type { TraceQuery } from '../../shared/schemas/trace'
import type { Db } from '../utils/db'

const like = (s: string) => `${s.replace(/[\\%_]/g, (c) => `\\${c}`)}%`

/**
 * Implant rows matching a trace query, as the person may see them: coordinators and admins within their
 * facility (everything when they work group-wide), surgeons only their own patients.
 * Uses the lot/serial (text_pattern_ops) and DI indexes on case_items for exact and prefix matches.
 */
export function traceRows(db: Db, q: TraceQuery, user: User) {
  let query = db.selectFrom('case_items as i')
    .innerJoin('cases as c', 'c.id', 'i.case_id')
    .innerJoin('patients as p', 'p.id', 'c.patient_id')
    .innerJoin('users as s', 's.id', 'c.surgeon_id')
    .innerJoin('facilities as f', 'f.id', 'c.facility_id')
    .leftJoin('catalog_items as ci', 'ci.id', 'i.item_id')
  if (q.lot) query = q.lotMatch === 'prefix' ? query.where('i.lot', 'like', like(q.lot)) : query.where('i.lot', '=', q.lot)
  if (q.serial) query = q.serialMatch === 'prefix' ? query.where('i.serial', 'like', like(q.serial)) : query.where('i.serial', '=', q.serial)
  if (q.gtin) query = query.where('i.di', '=', q.gtin.padStart(14, '0'))
  if (q.di) query = query.where('i.di', '=', q.di)
  if (q.itemId) query = query.where('i.item_id', '=', q.itemId)
  if (q.from) query = query.where(sql<boolean>`(i.recorded_at AT TIME ZONE f.time_zone)::date >= ${q.from}::date`)
  if (q.to) query = query.where(sql<boolean>`(i.recorded_at AT TIME ZONE f.time_zone)::date <= ${q.to}::date`)
  if (q.surgeonId) query = query.where('c.surgeon_id', '=', q.surgeonId)
  if (user.role === 'surgeon') query = query.where('c.surgeon_id', '=', user.id)
  if (user.facilityId) query = query.where('c.facility_id', '=', user.facilityId)
  else if (q.facilityId) query = query.where('c.facility_id', '=', q.facilityId)
  return query
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
    sql<number>`count(*) OVER ()`.as('total'),
  ]).orderBy(sql.ref(SORT[q.sort]), q.dir).orderBy('i.id', q.dir)
  query = opts.all ? query.limit(100_000) : query.limit(q.pageSize).offset((q.page - 1) * q.pageSize)
  const rows = await query.execute()
  const total = rows[0] ? Number(rows[0].total) : 0
  return { rows, total }
}

/** Every search that shows patient data is logged: who, when, the query, how many patients. */
export async function logPhiAccess(db: Db, user: User, action: string, query: unknown, patients: number, rows: number) {
  await db.insertInto('phi_access_log').values({ user_id: user.id, action, query: JSON.stringify(query), patients, rows }).execute()
}
