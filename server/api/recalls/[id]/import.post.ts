/**
 * POST /api/recalls/:id/import { csv, dryRun } — a notice's list of affected items as CSV. With dryRun
 * (the default) nothing is stored: the answer names every bad row and why. Without it, the whole file
 * is imported in one transaction, or nothing when any row is bad.
 */
import { IdParams } from '../../../../shared/schemas/cases'
import { RecallImportBody } from '../../../../shared/schemas/recalls'
import { parseRecallCsv } from '../../../../shared/utils/recall-csv'
import { assertRecallOpen, loadRecall, matchRecall } from '../../../queries/recalls'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const body = await readBodyWith(event, RecallImportBody)
  const parsed = parseRecallCsv(body.csv)
  const preview = { rows: parsed.rows.length, columns: parsed.columns, errors: parsed.errors, sample: parsed.rows.slice(0, 20) }
  if (body.dryRun) return { ...preview, imported: 0 }
  if (parsed.errors.length) {
    throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: `${parsed.errors.length} ${parsed.errors.length === 1 ? 'row needs' : 'rows need'} fixing; nothing was imported.`, data: { errors: parsed.errors } })
  }
  return useDb().transaction().execute(async (trx) => {
    assertRecallOpen(await loadRecall(trx, id, { forUpdate: true }))
    for (let i = 0; i < parsed.rows.length; i += 1000) {
      await trx.insertInto('recall_items').values(parsed.rows.slice(i, i + 1000).map((r) => ({
        recall_id: id, di: r.gtin ?? r.hibccDi!, lot: r.lot, serial: r.serial, expiry_from: r.expiryFrom, expiry_to: r.expiryTo, note: r.note,
      }))).execute()
    }
    const m = await matchRecall(trx, id)
    await writeAudit(trx, { actorId: user.id, action: 'recall.import', entity: 'recall', entityId: id, details: { rows: parsed.rows.length, ...m } }, event)
    return { ...preview, imported: parsed.rows.length, ...m }
  })
})
