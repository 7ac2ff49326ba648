import { sql } from 'kysely'
import type { Db } from '../utils/db'

export async function loadRecall(db: Db, id: number, opts: { forUpdate?: boolean } = {}) {
  let q = db.selectFrom('recalls').selectAll().where('id', '=', id)
  if (opts.forUpdate) q = q.forUpdate()
  const r = await q.executeTakeFirst()
  if (!r) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such recall.' })
  return r
}

export function assertRecallOpen(r: { status: string }) {
  if (r.status !== 'open') throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'This recall is closed.' })
}

/**
 * Find what a recall names: implanted units (patients to follow up) and packs on any shelf (to pull;
 * quarantined so that a scan of them is refused). A unit whose expiry is unknown is included when the
 * notice names an expiry range: a possibly affected unit is always looked at by a person.
 */
export async function matchRecall(db: Db, recallId: number) {
  const patients = await sql<{ id: number }>`
    INSERT INTO recall_patients (recall_id, case_item_id)
    SELECT DISTINCT ${recallId}::int, i.id
    FROM recall_items ri
    JOIN case_items i ON i.di = ri.di
      AND (ri.lot IS NULL OR i.lot = ri.lot)
      AND (ri.serial IS NULL OR i.serial = ri.serial)
      AND (ri.expiry_from IS NULL OR i.expiry IS NULL OR i.expiry >= ri.expiry_from)
      AND (ri.expiry_to IS NULL OR i.expiry IS NULL OR i.expiry <= ri.expiry_to)
    WHERE ri.recall_id = ${recallId} AND i.disposition = 'implanted'
    ON CONFLICT (recall_id, case_item_id) DO NOTHING
    RETURNING id`.execute(db)
  const stock = await sql<{ id: number; stock_line_id: number }>`
    INSERT INTO recall_stock (recall_id, stock_line_id, on_hand_at_match)
    SELECT DISTINCT ${recallId}::int, sl.id, sl.on_hand
    FROM recall_items ri
    JOIN catalog_items ci ON ci.gtin = ri.di OR ci.hibcc_di = ri.di
    JOIN stock_lines sl ON sl.item_id = ci.id
      AND (ri.lot IS NULL OR sl.lot = ri.lot)
      AND (ri.expiry_from IS NULL OR sl.expiry IS NULL OR sl.expiry >= ri.expiry_from)
      AND (ri.expiry_to IS NULL OR sl.expiry IS NULL OR sl.expiry <= ri.expiry_to)
    WHERE ri.recall_id = ${recallId} AND ri.serial IS NULL
    ON CONFLICT (recall_id, stock_line_id) DO NOTHING
    RETURNING id, stock_line_id`.execute(db)
  await sql`UPDATE stock_lines SET quarantined = true, updated_at = now()
    WHERE id IN (SELECT stock_line_id FROM recall_stock WHERE recall_id = ${recallId}) AND NOT quarantined`.execute(db)
  return { newPatients: patients.rows.length, newStock: stock.rows.length }
}

/** The campaign page: affected items, patients with status, stock lines, and progress to closure. */
export async function recallDetail(db: Db, id: number, facilityId: number | null) {
  const recall = await loadRecall(db, id)
  const [items, patientsQ, stockQ] = await Promise.all([
    db.selectFrom('recall_items').selectAll().where('recall_id', '=', id).orderBy('id').execute(),
    (() => {
      let q = db.selectFrom('recall_patients as rp')
        .innerJoin('case_items as i', 'i.id', 'rp.case_item_id')
        .innerJoin('cases as c', 'c.id', 'i.case_id')
        .innerJoin('patients as p', 'p.id', 'c.patient_id')
        .innerJoin('users as s', 's.id', 'c.surgeon_id')
        .innerJoin('facilities as f', 'f.id', 'c.facility_id')
        .leftJoin('catalog_items as ci', 'ci.id', 'i.item_id')
        .leftJoin('users as u', 'u.id', 'rp.updated_by')
        .select([
          'rp.id', 'rp.status', 'rp.note', 'rp.updated_at', 'u.name as updated_by_name',
          'i.id as case_item_id', 'i.di', 'i.lot', 'i.serial', 'i.expiry', 'i.recorded_at', 'c.id as case_id', 'c.surgeon_id',
          'p.mrn', 'p.family_name', 'p.given_name', 'p.birth_date', 'p.sex', 's.name as surgeon_name', 's.email as surgeon_email',
          'f.name as facility_name', 'f.time_zone', 'ci.description',
        ])
        .where('rp.recall_id', '=', id)
      if (facilityId) q = q.where('c.facility_id', '=', facilityId)
      return q.orderBy('s.name').orderBy('p.mrn').execute()
    })(),
    (() => {
      let q = db.selectFrom('recall_stock as rs')
        .innerJoin('stock_lines as sl', 'sl.id', 'rs.stock_line_id')
        .innerJoin('stock_locations as loc', 'loc.id', 'sl.location_id')
        .innerJoin('facilities as f', 'f.id', 'loc.facility_id')
        .innerJoin('catalog_items as ci', 'ci.id', 'sl.item_id')
        .leftJoin('users as u', 'u.id', 'rs.updated_by')
        .select(['rs.id', 'rs.status', 'rs.on_hand_at_match', 'rs.updated_at', 'u.name as updated_by_name', 'sl.id as stock_line_id', 'sl.lot', 'sl.expiry', 'sl.on_hand',
          'loc.name as location', 'f.name as facility_name', 'ci.description', 'ci.gtin'])
        .where('rs.recall_id', '=', id)
      if (facilityId) q = q.where('loc.facility_id', '=', facilityId)
      return q.orderBy('f.name').orderBy('loc.name').execute()
    })(),
  ])
  const done = patientsQ.filter((p) => p.status === 'closed' || p.status === 'no_action_needed').length
  const pulled = stockQ.filter((s) => s.status !== 'to_pull').length
  return {
    recall, items, patients: patientsQ, stock: stockQ,
    progress: { patients: patientsQ.length, patientsDone: done, stock: stockQ.length, stockDone: pulled, closable: done === patientsQ.length && pulled === stockQ.length },
  }
}
