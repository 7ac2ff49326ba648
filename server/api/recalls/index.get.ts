/** GET /api/recalls — every recall campaign with its progress to closure. */
import { sql } from 'kysely'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'coordinator', 'admin')
  const rows = await useDb().selectFrom('recalls as r')
    .select([
      'r.id', 'r.title', 'r.notice_ref', 'r.fda_class', 'r.maker', 'r.received_on', 'r.status', 'r.created_at', 'r.closed_at',
      sql<number>`(SELECT count(*)::int FROM recall_items ri WHERE ri.recall_id = r.id)`.as('items'),
      sql<number>`(SELECT count(*)::int FROM recall_patients rp WHERE rp.recall_id = r.id)`.as('patients'),
      sql<number>`(SELECT count(*)::int FROM recall_patients rp WHERE rp.recall_id = r.id AND rp.status IN ('closed', 'no_action_needed'))`.as('patients_done'),
      sql<number>`(SELECT count(*)::int FROM recall_stock rs WHERE rs.recall_id = r.id)`.as('stock'),
      sql<number>`(SELECT count(*)::int FROM recall_stock rs WHERE rs.recall_id = r.id AND rs.status <> 'to_pull')`.as('stock_done'),
    ])
    .orderBy('r.status').orderBy('r.created_at', 'desc').execute()
  return rows.map((r) => ({
    id: r.id, title: r.title, noticeRef: r.notice_ref, fdaClass: r.fda_class, maker: r.maker, receivedOn: r.received_on, status: r.status,
    items: r.items, patients: r.patients, patientsDone: r.patients_done, stock: r.stock, stockDone: r.stock_done,
  }))
})
