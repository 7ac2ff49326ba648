/** GET /api/cases/:id/record — the record's versions (who signed, when, hashes) and the latest record. */
import { IdParams } from '../../../../shared/schemas/cases'
import { loadCase } from '../../../queries/cases'
import { assertRecordReader } from '../../../queries/records'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const db = useDb()
  const c = await loadCase(db, id, user)
  await assertRecordReader(db, c, user)
  const versions = await db.selectFrom('record_versions as v').innerJoin('users as u', 'u.id', 'v.signed_by')
    .select(['v.version', 'v.reason', 'v.record_hash', 'v.pdf_hash', 'v.signed_at', 'v.attestation', 'u.name as signed_by'])
    .where('v.case_id', '=', id).orderBy('v.version').execute()
  await writeAudit(db, { actorId: user.id, action: 'phi.read', entity: 'record', entityId: id }, event)
  return {
    status: c.status,
    surgeonId: c.surgeon_id,
    versions: versions.map((v) => ({
      version: v.version, reason: v.reason, recordHash: v.record_hash, pdfHash: v.pdf_hash,
      signedAt: new Date(v.signed_at).toISOString(), signedBy: v.signed_by, attestation: v.attestation,
    })),
  }
})
