/**
 * GET /api/cases/:id/record.pdf[?version=n] — a signed version exactly as stored (byte for byte), or,
 * before signing, the record as it stands with "DRAFT — not signed" across every page.
 */
import { IdParams } from '../../../../shared/schemas/cases'
import { RecordPdfQuery } from '../../../../shared/schemas/record'
import { loadCase } from '../../../queries/cases'
import { assertRecordReader, draftPdf } from '../../../queries/records'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const q = await queryWith(event, RecordPdfQuery)
  const db = useDb()
  const c = await loadCase(db, id, user)
  await assertRecordReader(db, c, user)
  let v = db.selectFrom('record_versions').select(['version', 'pdf', 'pdf_hash']).where('case_id', '=', id)
  v = q.version ? v.where('version', '=', q.version) : v.orderBy('version', 'desc').limit(1)
  const stored = await v.executeTakeFirst()
  await writeAudit(db, { actorId: user.id, action: 'phi.read', entity: 'record.pdf', entityId: id, details: { version: stored?.version ?? 'draft' } }, event)
  setResponseHeader(event, 'content-type', 'application/pdf')
  setResponseHeader(event, 'cache-control', 'private, no-store')
  if (stored) {
    setResponseHeader(event, 'content-disposition', `attachment; filename="implant-record-${id}-v${stored.version}.pdf"`)
    setResponseHeader(event, 'x-record-sha256', stored.pdf_hash)
    return stored.pdf
  }
  if (q.version) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: `There is no signed version ${q.version}.` })
  const { pdf } = await draftPdf(db, id)
  setResponseHeader(event, 'content-disposition', `attachment; filename="implant-record-${id}-draft.pdf"`)
  return Buffer.from(pdf)
})
