import { sql } from 'kysely'
import type { Db } from '../utils/db'
import type { Role } from '../../shared/utils/roles'

/** One thing waiting for the signed-in person, with where to go to do it. */
export interface Task { code: string; count: number; text: string; to: string; items?: { id: number; label: string; to: string }[] }

const plural = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`

/**
 * What waits for this role at this facility, beyond today's board: records to sign, logs left open from
 * earlier days, scans held as unmatched, recall follow-ups, stock below par or near expiry, mail that could
 * not be sent. Only counts and names the role may see anyway.
 */
export async function tasksFor(db: Db, user: { id: number; role: Role }, f: { id: number; time_zone: string }, today: string): Promise<Task[]> {
  const out: Task[] = []
  const add = (t: Task) => { if (t.count > 0) out.push(t) }

  if (user.role === 'surgeon') {
    const rows = await db.selectFrom('cases as c').innerJoin('patients as p', 'p.id', 'c.patient_id')
      .select(['c.id', 'p.family_name', 'p.given_name', 'p.mrn'])
      .where('c.facility_id', '=', f.id).where('c.surgeon_id', '=', user.id).where('c.status', '=', 'closed')
      .orderBy('c.scheduled_at').limit(20).execute()
    add({
      code: 'to_sign', count: rows.length, to: rows[0] ? `/cases/${rows[0].id}/record` : '/',
      text: `${plural(rows.length, 'implant record waits', 'implant records wait')} for your signature.`,
      items: rows.map((r) => ({ id: r.id, label: `${r.family_name}, ${r.given_name} · MRN ${r.mrn}`, to: `/cases/${r.id}/record` })),
    })
  }

  if (user.role === 'circulator' || user.role === 'coordinator' || user.role === 'admin') {
    const rows = await db.selectFrom('cases as c').innerJoin('patients as p', 'p.id', 'c.patient_id')
      .select(['c.id', 'p.family_name', 'p.given_name', 'p.mrn', sql<string>`to_char(c.scheduled_at AT TIME ZONE ${f.time_zone}, 'YYYY-MM-DD')`.as('day')])
      .where('c.facility_id', '=', f.id).where('c.status', 'in', ['planned', 'open'])
      .where(sql<boolean>`(c.scheduled_at AT TIME ZONE ${f.time_zone})::date < ${today}::date`)
      .orderBy('c.scheduled_at').limit(20).execute()
    add({
      code: 'left_open', count: rows.length, to: rows[0] ? `/cases/${rows[0].id}/record` : '/',
      text: `${plural(rows.length, 'case', 'cases')} from an earlier day ${rows.length === 1 ? 'is' : 'are'} still open: finish the implant log and close it.`,
      items: rows.map((r) => ({ id: r.id, label: `${r.day} · ${r.family_name}, ${r.given_name} · MRN ${r.mrn}`, to: `/cases/${r.id}/record` })),
    })
  }

  if (user.role === 'circulator' || user.role === 'coordinator') {
    const rows = await db.selectFrom('case_items as i').innerJoin('cases as c', 'c.id', 'i.case_id')
      .select(['c.id', sql<number>`count(*)::int`.as('n')])
      .where('c.facility_id', '=', f.id).where('i.item_id', 'is', null).where('c.status', 'in', ['planned', 'open'])
      .groupBy('c.id').orderBy('c.id').limit(20).execute()
    const n = rows.reduce((a, r) => a + r.n, 0)
    add({
      code: 'unmatched', count: n, to: rows[0] ? `/cases/${rows[0].id}/implants` : '/',
      text: `${plural(n, 'scanned pack is', 'scanned packs are')} not in the catalog yet: match ${n === 1 ? 'it' : 'them'} to an item.`,
    })
  }

  if (user.role === 'coordinator' || user.role === 'admin') {
    const follow = await db.selectFrom('recall_patients as rp').innerJoin('recalls as r', 'r.id', 'rp.recall_id')
      .innerJoin('case_items as i', 'i.id', 'rp.case_item_id').innerJoin('cases as c', 'c.id', 'i.case_id')
      .select([sql<number>`count(*)::int`.as('patients'), sql<number>`count(DISTINCT r.id)::int`.as('recalls')])
      .where('c.facility_id', '=', f.id).where('r.status', '=', 'open').where('rp.status', 'not in', ['no_action_needed', 'closed'])
      .executeTakeFirstOrThrow()
    add({
      code: 'recall_follow_up', count: follow.patients, to: '/recalls',
      text: `${plural(follow.patients, 'affected patient', 'affected patients')} in ${plural(follow.recalls, 'open recall', 'open recalls')} still to follow up.`,
    })
    const below = await sql<{ n: number }>`
      SELECT count(*)::int AS n FROM par_levels par
      JOIN stock_locations loc ON loc.id = par.location_id AND loc.facility_id = ${f.id}
      WHERE par.par > (SELECT coalesce(sum(sl.on_hand), 0) FROM stock_lines sl
                        WHERE sl.item_id = par.item_id AND sl.location_id = par.location_id AND NOT sl.quarantined)`.execute(db)
    const nBelow = below.rows[0]?.n ?? 0
    add({ code: 'below_par', count: nBelow, to: '/shelf?view=replenishment', text: `${plural(nBelow, 'item is', 'items are')} below par: see what to reorder.` })
    const exp = await db.selectFrom('stock_lines as sl').innerJoin('stock_locations as loc', 'loc.id', 'sl.location_id')
      .select(sql<number>`count(*)::int`.as('n')).where('loc.facility_id', '=', f.id).where('sl.on_hand', '>', 0)
      .where(sql<boolean>`sl.expiry <= ${today}::date + 30`).executeTakeFirstOrThrow()
    add({ code: 'expiring', count: exp.n, to: '/shelf?view=expiring', text: exp.n === 1 ? '1 stock line expires within 30 days or has expired.' : `${exp.n} stock lines expire within 30 days or have expired.` })
  }

  if (user.role === 'admin') {
    const failed = await db.selectFrom('outbox').select(sql<number>`count(*)::int`.as('n')).where('status', '=', 'failed').executeTakeFirstOrThrow()
    add({ code: 'mail_failed', count: failed.n, to: '/audit', text: `${plural(failed.n, 'e-mail', 'e-mails')} could not be delivered after every retry: check the mail settings and the addresses.` })
    const inbox = await db.selectFrom('facilities').select('records_inbox').where('id', '=', f.id).executeTakeFirst()
    if (!inbox?.records_inbox) out.push({ code: 'no_records_inbox', count: 1, to: '/settings', text: 'No records inbox is set: signed records are not e-mailed to the chart. Set it under Settings.' })
  }
  return out
}
