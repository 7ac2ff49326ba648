// Queries of the admin screens (People, Settings, Audit). Everything is scoped to one facility: an admin
// manages the people of their own facility and sees the trail those people left.
import { sql, type SelectQueryBuilder } from 'kysely'
import type { Database, Role } from '../../db/types'
import type { AuditQuery, PersonView, PhiAccessQuery, UsersQuery } from '../../shared/schemas/admin'
import { resolveRules } from '../../shared/utils/sizing'
import type { Db } from '../utils/db'

const USER_COLUMNS = ['u.id', 'u.name', 'u.email', 'u.role', 'u.active', 'u.facility_id', 'u.created_at', 'u.updated_at'] as const

function iso(d: Date | string | null | undefined): string | null {
  return d == null ? null : new Date(d).toISOString()
}

export function personView(r: {
  id: number; name: string; email: string; role: Role; active: boolean; created_at: Date; updated_at: Date; last_sign_in_at?: Date | string | null
}): PersonView {
  return {
    id: r.id, name: r.name, email: r.email, role: r.role, active: r.active,
    createdAt: iso(r.created_at)!, updatedAt: iso(r.updated_at)!, lastSignInAt: iso(r.last_sign_in_at ?? null),
  }
}

/** What the audit trail keeps of an account: never the hash. */
export function auditablePerson(r: { name: string; email: string; role: Role; active: boolean }) {
  return { name: r.name, email: r.email, role: r.role, active: r.active }
}

/** The people of a facility, filtered by role, active and a name or e-mail fragment. */
export async function listPeople(db: Db, facilityId: number, q: UsersQuery): Promise<PersonView[]> {
  let query = db.selectFrom('users as u')
    .select([...USER_COLUMNS,
      // the audit trail already records each sign-in; (actor_id, at) is indexed
      sql<Date | null>`(SELECT max(a.at) FROM audit_log a WHERE a.actor_id = u.id AND a.action = 'auth.login')`.as('last_sign_in_at'),
    ])
    .where('u.facility_id', '=', facilityId)
  if (q.role) query = query.where('u.role', '=', q.role)
  if (q.active !== undefined) query = query.where('u.active', '=', q.active)
  if (q.q) {
    const like = `%${q.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`
    query = query.where((eb) => eb.or([eb('u.name', 'ilike', like), eb('u.email', 'ilike', like)]))
  }
  const rows = await query.orderBy('u.active', 'desc').orderBy('u.name').orderBy('u.id').execute()
  return rows.map(personView)
}

/** One person of the facility; 404 for anyone else (never reveal other facilities' accounts). */
export async function personInFacility(db: Db, id: number, facilityId: number, opts: { forUpdate?: boolean } = {}) {
  let q = db.selectFrom('users as u').select(USER_COLUMNS).where('u.id', '=', id).where('u.facility_id', '=', facilityId)
  if (opts.forUpdate) q = q.forUpdate()
  const row = await q.executeTakeFirst()
  if (!row) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such person in this facility.' })
  return row
}

export async function emailTaken(db: Db, email: string, exceptId?: number): Promise<boolean> {
  let q = db.selectFrom('users').select('id').where(sql`lower(email)`, '=', email.toLowerCase())
  if (exceptId) q = q.where('id', '<>', exceptId)
  return !!(await q.executeTakeFirst())
}

export function duplicateEmail(): never {
  throw createError({
    statusCode: 409, statusMessage: 'Conflict',
    message: 'An account with this e-mail address already exists. Find the person in the list instead, or use another address.',
    data: { fields: { email: 'This e-mail address already has an account.' } },
  })
}

// ---- Settings -------------------------------------------------------------------------------

export interface ProfileValues { nailClearanceMm: number; distalScrewRounding: 'up' | 'down'; tadLimitMm: number }

export function profileValues(r: { nail_clearance_mm: string; distal_screw_rounding: 'up' | 'down'; tad_limit_mm: string }): ProfileValues {
  return { nailClearanceMm: Number(r.nail_clearance_mm), distalScrewRounding: r.distal_screw_rounding, tadLimitMm: Number(r.tad_limit_mm) }
}

export function sameProfile(a: ProfileValues, b: ProfileValues): boolean {
  // compare in hundredths, the stored precision
  const c = (n: number) => Math.round(n * 100)
  return c(a.nailClearanceMm) === c(b.nailClearanceMm) && a.distalScrewRounding === b.distalScrewRounding && c(a.tadLimitMm) === c(b.tadLimitMm)
}

export function facilitySettingsRow(db: Db, facilityId: number, opts: { forUpdate?: boolean } = {}) {
  let q = db.selectFrom('facilities').select(['id', 'code', 'name', 'time_zone', 'gs_substitute', 'records_inbox']).where('id', '=', facilityId)
  if (opts.forUpdate) q = q.forUpdate()
  return q.executeTakeFirstOrThrow()
}

export function facilityValues(f: { time_zone: string; gs_substitute: string | null; records_inbox: string | null }) {
  return { timeZone: f.time_zone, gsSubstitute: f.gs_substitute, recordsInbox: f.records_inbox }
}

/** Every version of the facility's sizing rules, newest first, with who saved it. */
export function profileHistory(db: Db, facilityId: number) {
  return db.selectFrom('rule_profiles as rp').leftJoin('users as u', 'u.id', 'rp.created_by')
    .select(['rp.id', 'rp.version', 'rp.nail_clearance_mm', 'rp.distal_screw_rounding', 'rp.tad_limit_mm', 'rp.created_at', 'u.name as created_by_name'])
    .where('rp.facility_id', '=', facilityId)
    .orderBy('rp.version', 'desc')
    .execute()
}

export async function settingsView(db: Db, facilityId: number) {
  const [f, history, cases] = await Promise.all([
    facilitySettingsRow(db, facilityId),
    profileHistory(db, facilityId),
    // how many cases each version is recorded on, so the history says what a version still governs
    db.selectFrom('cases').select(['rule_profile_id', sql<number>`count(*)::int`.as('n')])
      .where('facility_id', '=', facilityId).where('rule_profile_id', 'is not', null).groupBy('rule_profile_id').execute(),
  ])
  const caseCount = new Map(cases.map((c) => [c.rule_profile_id, c.n]))
  const latest = history[0]
  const defaults = resolveRules()
  return {
    facility: { id: f.id, code: f.code, name: f.name, ...facilityValues(f) },
    profile: latest
      ? { version: latest.version, ...profileValues(latest) }
      // a facility set up without a profile sizes with the engine's defaults until the first save
      : { version: null, nailClearanceMm: defaults.nailClearanceMm, distalScrewRounding: defaults.distalScrewRounding, tadLimitMm: defaults.tadLimitMm },
    history: history.map((h) => ({
      version: h.version, ...profileValues(h), createdBy: h.created_by_name ?? null, createdAt: iso(h.created_at)!, cases: caseCount.get(h.id) ?? 0,
    })),
  }
}

// ---- Audit and PHI access -------------------------------------------------------------------

/** [from 00:00, to+1 00:00) in the facility's own time zone, as the dates on screen mean. */
function inDays<QB extends SelectQueryBuilder<Database, any, any>>(q: QB, column: string, tz: string, from?: string, to?: string): QB {
  let out = q
  if (from) out = out.where(sql.ref(column), '>=', sql<Date>`(${from}::date::timestamp AT TIME ZONE ${tz})`) as QB
  if (to) out = out.where(sql.ref(column), '<', sql<Date>`((${to}::date + 1)::timestamp AT TIME ZONE ${tz})`) as QB
  return out
}

/** "user" matches user.create and user.update; "user.create" matches itself only. */
function actionMatch(action: string) {
  const prefix = `${action.replace(/[\\%_]/g, (c) => `\\${c}`)}.%`
  return sql<boolean>`(a.action = ${action} OR a.action LIKE ${prefix})`
}

export async function auditPage(db: Db, facilityId: number, tz: string, q: AuditQuery) {
  let base = db.selectFrom('audit_log as a').leftJoin('users as u', 'u.id', 'a.actor_id')
    // the trail of this facility: what its people did, and failed sign-ins against its accounts
    .where((eb) => eb.or([
      eb('u.facility_id', '=', facilityId),
      eb.and([
        eb('a.actor_id', 'is', null), eb('a.entity', '=', 'user'),
        eb('a.entity_id', 'in', eb.selectFrom('users as fu').select(sql<string>`fu.id::text`.as('id')).where('fu.facility_id', '=', facilityId)),
      ]),
    ]))
  if (q.actor) base = base.where('a.actor_id', '=', q.actor)
  if (q.action) base = base.where(actionMatch(q.action))
  if (q.entity) base = base.where('a.entity', '=', q.entity)
  if (q.entityId) base = base.where('a.entity_id', '=', q.entityId)
  base = inDays(base, 'a.at', tz, q.from, q.to)

  const [rows, total] = await Promise.all([
    base.select(['a.id', 'a.at', 'a.actor_id', 'a.action', 'a.entity', 'a.entity_id', 'a.details', 'a.ip', 'u.name as actor_name'])
      .orderBy('a.at', 'desc').orderBy('a.id', 'desc')
      .limit(q.pageSize).offset((q.page - 1) * q.pageSize).execute(),
    base.select(sql<number>`count(*)::int`.as('n')).executeTakeFirstOrThrow(),
  ])
  return {
    total: total.n, page: q.page, pageSize: q.pageSize, timeZone: tz,
    rows: rows.map((r) => ({
      id: Number(r.id), at: iso(r.at)!, actorId: r.actor_id, actor: r.actor_name ?? null,
      action: r.action, entity: r.entity, entityId: r.entity_id, details: r.details, ip: r.ip,
    })),
  }
}

export async function phiAccessPage(db: Db, facilityId: number, tz: string, q: PhiAccessQuery) {
  let base = db.selectFrom('phi_access_log as a').innerJoin('users as u', 'u.id', 'a.user_id').where('u.facility_id', '=', facilityId)
  if (q.user) base = base.where('a.user_id', '=', q.user)
  if (q.action) base = base.where(actionMatch(q.action))
  base = inDays(base, 'a.at', tz, q.from, q.to)
  const [rows, total] = await Promise.all([
    base.select(['a.id', 'a.at', 'a.user_id', 'a.action', 'a.query', 'a.patients', 'a.rows', 'u.name as user_name', 'u.role as user_role'])
      .orderBy('a.at', 'desc').orderBy('a.id', 'desc')
      .limit(q.pageSize).offset((q.page - 1) * q.pageSize).execute(),
    base.select(sql<number>`count(*)::int`.as('n')).executeTakeFirstOrThrow(),
  ])
  return {
    total: total.n, page: q.page, pageSize: q.pageSize, timeZone: tz,
    rows: rows.map((r) => ({
      id: Number(r.id), at: iso(r.at)!, userId: r.user_id, user: r.user_name, role: r.user_role,
      action: r.action, query: r.query, patients: r.patients, rows: r.rows,
    })),
  }
}
