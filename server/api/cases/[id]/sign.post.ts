/**
 * POST /api/cases/:id/sign — the case's surgeon (only) signs the closed record after re-entering the
 * password. Stores signer, time, attestation, the SHA-256 of the canonical record and of the PDF, and
 * the PDF itself; the case becomes read-only (the database refuses changes). The signed PDF goes to
 * the facility's records inbox through the outbox.
 */
import { IdParams } from '../../../../shared/schemas/cases'
import { ATTESTATION, SignBody } from '../../../../shared/schemas/record'
import { loadCase } from '../../../queries/cases'
import { checkSigningPassword, signedVersion } from '../../../queries/records'
import { enqueueMail } from '../../../utils/mail'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'surgeon')
  const { id } = await paramsWith(event, IdParams)
  const body = await readBodyWith(event, SignBody)
  const db = useDb()
  const c = await loadCase(db, id, user)
  if (c.surgeon_id !== user.id) throw createError({ statusCode: 403, statusMessage: 'Forbidden', message: 'Only the surgeon of this case can sign its record.' })
  if (c.status === 'signed') throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'This record is already signed. A correction needs an addendum.' })
  if (c.status !== 'closed') throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'The circulator closes the case before it can be signed.' })
  try {
    await checkSigningPassword(db, user, body.password, clientIp(event))
  } catch (e) {
    await writeAudit(db, { actorId: user.id, action: 'record.sign_refused', entity: 'case', entityId: id }, event)
    throw e
  }

  return db.transaction().execute(async (trx) => {
    const locked = await loadCase(trx, id, user, { forUpdate: true })
    if (locked.status !== 'closed') throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'The case changed meanwhile. Reload and try again.' })
    const signedAt = new Date()
    const v = await signedVersion(trx, id, { version: 1, previousVersionHash: null, addendumReason: null }, user, signedAt)
    const row = await trx.insertInto('record_versions').values({
      case_id: id, version: 1, record: JSON.stringify(v.record), record_hash: v.hash, pdf: Buffer.from(v.pdf), pdf_hash: v.pdfHash,
      attestation: ATTESTATION, signed_by: user.id, signed_at: signedAt,
    }).returning('id').executeTakeFirstOrThrow()
    await trx.updateTable('cases').set({ status: 'signed' }).where('id', '=', id).execute()
    const facility = await trx.selectFrom('facilities').select(['records_inbox', 'name']).where('id', '=', locked.facility_id).executeTakeFirstOrThrow()
    if (facility.records_inbox) {
      await enqueueMail(trx, {
        to: facility.records_inbox, kind: 'signed_record', ref: `case:${id}`, dedupeKey: `signed_record:${row.id}`,
        subject: `Signed implant record: MRN ${v.record.patient.mrn}, version 1`,
        text: `The signed implant record of MRN ${v.record.patient.mrn} (${facility.name}) is attached.\nSHA-256 of the record: ${v.hash}\nSHA-256 of the PDF: ${v.pdfHash}\n\nIsthmus`,
        attachments: [{ filename: `implant-record-${id}-v1.pdf`, contentType: 'application/pdf', content: v.pdf }],
      })
    }
    await writeAudit(trx, { actorId: user.id, action: 'record.sign', entity: 'case', entityId: id, details: { version: 1, recordHash: v.hash, pdfHash: v.pdfHash } }, event)
    await notifyLive(trx, { caseId: id, kind: 'status' })
    return { version: 1, recordHash: v.hash, pdfHash: v.pdfHash, signedAt: signedAt.toISOString() }
  })
})
