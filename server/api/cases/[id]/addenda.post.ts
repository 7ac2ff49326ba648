/**
 * POST /api/cases/:id/addenda — a correction to a signed record: a new version that names the one before
 * it and why, signed again by the case's surgeon. Earlier versions stay as they were, byte for byte.
 */
import { IdParams } from '../../../../shared/schemas/cases'
import { AddendumBody, ATTESTATION } from '../../../../shared/schemas/record'
import { loadCase } from '../../../queries/cases'
import { checkSigningPassword, signedVersion } from '../../../queries/records'
import { enqueueMail } from '../../../utils/mail'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'surgeon')
  const { id } = await paramsWith(event, IdParams)
  const body = await readBodyWith(event, AddendumBody)
  const db = useDb()
  const c = await loadCase(db, id, user)
  if (c.surgeon_id !== user.id) throw createError({ statusCode: 403, statusMessage: 'Forbidden', message: 'Only the surgeon of this case can add an addendum.' })
  if (c.status !== 'signed') throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'Only a signed record takes an addendum; change the case itself until it is signed.' })
  await checkSigningPassword(db, user, body.password, clientIp(event))

  return db.transaction().execute(async (trx) => {
    await loadCase(trx, id, user, { forUpdate: true })
    const prev = await trx.selectFrom('record_versions').select(['id', 'version', 'record_hash']).where('case_id', '=', id).orderBy('version', 'desc').limit(1).executeTakeFirstOrThrow()
    const version = prev.version + 1
    const signedAt = new Date()
    const reason = `${body.reason} — Correction: ${body.correction}`
    const v = await signedVersion(trx, id, { version, previousVersionHash: prev.record_hash, addendumReason: reason }, user, signedAt)
    const row = await trx.insertInto('record_versions').values({
      case_id: id, version, previous_id: prev.id, reason, record: JSON.stringify(v.record), record_hash: v.hash,
      pdf: Buffer.from(v.pdf), pdf_hash: v.pdfHash, attestation: ATTESTATION, signed_by: user.id, signed_at: signedAt,
    }).returning('id').executeTakeFirstOrThrow()
    const facility = await trx.selectFrom('facilities').select('records_inbox').where('id', '=', c.facility_id).executeTakeFirstOrThrow()
    if (facility.records_inbox) {
      await enqueueMail(trx, {
        to: facility.records_inbox, kind: 'signed_record', ref: `case:${id}`, dedupeKey: `signed_record:${row.id}`,
        subject: `Addendum to implant record: MRN ${v.record.patient.mrn}, version ${version}`,
        text: `Version ${version} of the implant record of MRN ${v.record.patient.mrn} corrects version ${prev.version}.\nReason: ${body.reason}\nSHA-256 of the record: ${v.hash}\n\nIsthmus`,
        attachments: [{ filename: `implant-record-${id}-v${version}.pdf`, contentType: 'application/pdf', content: v.pdf }],
      })
    }
    await writeAudit(trx, { actorId: user.id, action: 'record.addendum', entity: 'case', entityId: id, details: { version, previous: prev.version, reason: body.reason, recordHash: v.hash } }, event)
    setResponseStatus(event, 201)
    return { version, recordHash: v.hash, pdfHash: v.pdfHash, signedAt: signedAt.toISOString() }
  })
})
