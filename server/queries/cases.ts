import type { User } from '#auth-utils'
import { sql } from 'kysely'
import type { Db } from '../utils/db'
import type { CaseStatus } from '../../db/types'

/** The case, if the person's facility may see it; 404 otherwise (never reveal other facilities' cases). */
export async function loadCase(db: Db, id: number, user: User, opts: { forUpdate?: boolean } = {}) {
  let q = db.selectFrom('cases').selectAll().where('id', '=', id)
  if (user.facilityId) q = q.where('facility_id', '=', user.facilityId)
  if (opts.forUpdate) q = q.forUpdate()
  const c = await q.executeTakeFirst()
  if (!c) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such case.' })
  return c
}

const EDITABLE: CaseStatus[] = ['planned', 'open']

/** Readings, sizes and implants change only while the case is planned or open. */
export function assertEditable(c: { status: CaseStatus }) {
  if (!EDITABLE.includes(c.status)) {
    throw createError({
      statusCode: 409,
      statusMessage: 'Conflict',
      message: c.status === 'signed'
        ? 'This case is signed and locked. A correction needs an addendum.'
        : 'This case is closed. Reopen it before changing anything.',
    })
  }
}

/** The first write to a planned case opens it. */
export async function openIfPlanned(db: Db, c: { id: number; status: CaseStatus }) {
  if (c.status === 'planned') {
    await db.updateTable('cases').set({ status: 'open', opened_at: sql`now()` }).where('id', '=', c.id).where('status', '=', 'planned').execute()
  }
}

/** All readings of a case, oldest first, with who entered them. */
export function caseReadings(db: Db, caseId: number) {
  return db.selectFrom('readings as r')
    .innerJoin('users as u', 'u.id', 'r.entered_by')
    .select(['r.id', 'r.kind', 'r.slot', 'r.value', 'r.unit', 'r.supersedes_id', 'r.note', 'r.entered_at', 'u.name as entered_by_name'])
    .where('r.case_id', '=', caseId)
    .orderBy('r.id')
    .execute()
}

export type ReadingList = Awaited<ReturnType<typeof caseReadings>>

/** The live value per (kind, slot): the newest row that no later row supersedes. */
export function currentReadings(rows: ReadingList) {
  const superseded = new Set(rows.map((r) => r.supersedes_id).filter((x): x is number => x != null))
  const current = new Map<string, ReadingList[number]>()
  for (const r of rows) if (!superseded.has(r.id)) current.set(`${r.kind}:${r.slot}`, r)
  return current
}

export function caseDecisions(db: Db, caseId: number) {
  return db.selectFrom('sizing_decisions as d')
    .innerJoin('users as u', 'u.id', 'd.decided_by')
    .innerJoin('catalog_items as ci', 'ci.id', 'd.chosen_item_id')
    .select([
      'd.id', 'd.component', 'd.slot', 'd.proposed_item_id', 'd.chosen_item_id', 'd.reason', 'd.guide_acknowledged',
      'd.engine', 'd.rule_profile_id', 'd.decided_at', 'u.name as decided_by_name', 'ci.description as chosen_description',
    ])
    .where('d.case_id', '=', caseId)
    .orderBy('d.id')
    .execute()
}

/** The newest decision per (component, slot). */
export function currentDecisions(rows: Awaited<ReturnType<typeof caseDecisions>>) {
  const out = new Map<string, (typeof rows)[number]>()
  for (const d of rows) out.set(`${d.component}:${d.slot}`, d)
  return out
}

export async function caseHeader(db: Db, caseId: number) {
  return db.selectFrom('cases as c')
    .innerJoin('patients as p', 'p.id', 'c.patient_id')
    .innerJoin('theatres as t', 't.id', 'c.theatre_id')
    .innerJoin('facilities as f', 'f.id', 'c.facility_id')
    .innerJoin('users as s', 's.id', 'c.surgeon_id')
    .leftJoin('users as ci', 'ci.id', 'c.circulator_id')
    .leftJoin('users as sc', 'sc.id', 'c.scrub_id')
    .leftJoin('rule_profiles as rp', 'rp.id', 'c.rule_profile_id')
    .select([
      'c.id', 'c.status', 'c.procedure', 'c.side', 'c.scheduled_at', 'c.opened_at', 'c.closed_at', 'c.surgeon_id', 'c.facility_id',
      'c.circulator_id', 'c.scrub_id', 'c.rule_profile_id',
      'p.id as patient_id', 'p.mrn', 'p.family_name', 'p.given_name', 'p.birth_date', 'p.sex',
      't.id as theatre_id', 't.name as theatre_name', 'f.name as facility_name', 'f.time_zone',
      's.name as surgeon_name', 'ci.name as circulator_name', 'sc.name as scrub_name',
      'rp.version as rule_version', 'rp.nail_clearance_mm', 'rp.distal_screw_rounding', 'rp.tad_limit_mm',
    ])
    .where('c.id', '=', caseId)
    .executeTakeFirstOrThrow()
}

/** The facility's newest sizing rule profile (each case records the one it was created under). */
export function latestRuleProfile(db: Db, facilityId: number) {
  return db.selectFrom('rule_profiles').selectAll().where('facility_id', '=', facilityId).orderBy('version', 'desc').limit(1).executeTakeFirst()
}
