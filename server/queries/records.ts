import { createHash } from 'node:crypto'
import type { User } from '#auth-utils'
import { buildRecord, recordHash, type CaseRecord, type RecordMeta } from '../../shared/utils/record'
import { ATTESTATION } from '../../shared/schemas/record'
import { renderRecordPdf } from '../utils/pdf/record-pdf'
import type { Db } from '../utils/db'
import { caseSnapshot } from './snapshot'

export function sha256(bytes: Uint8Array): string {
  return createHash('sha256').update(bytes).digest('hex')
}

/** Build, hash and render one signed version of a case's record. */
export async function signedVersion(db: Db, caseId: number, meta: RecordMeta, signer: { name: string }, signedAt: Date) {
  const snapshot = await caseSnapshot(db, caseId)
  const record = buildRecord(snapshot, meta)
  const hash = await recordHash(record)
  const pdf = await renderRecordPdf(record, { signature: { signerName: signer.name, signedAt: signedAt.toISOString(), attestation: ATTESTATION, recordHash: hash } })
  return { record, hash, pdf, pdfHash: sha256(pdf) }
}

/** The unsigned record as it stands now, watermarked as a draft. */
export async function draftPdf(db: Db, caseId: number): Promise<{ record: CaseRecord; pdf: Uint8Array }> {
  const record = buildRecord(await caseSnapshot(db, caseId), { version: 1, previousVersionHash: null, addendumReason: null })
  return { record, pdf: await renderRecordPdf(record, { signature: null }) }
}

/**
 * The case team (its surgeon, circulator and scrub, and anyone who recorded in it), the coordinator and
 * the admin may read the record; others get 404, as if it did not exist.
 */
export async function assertRecordReader(db: Db, c: { id: number; surgeon_id: number; circulator_id: number | null; scrub_id: number | null }, user: User) {
  if (user.role === 'coordinator' || user.role === 'admin') return
  if ([c.surgeon_id, c.circulator_id, c.scrub_id].includes(user.id)) return
  const [r, i] = await Promise.all([
    db.selectFrom('readings').select('id').where('case_id', '=', c.id).where('entered_by', '=', user.id).limit(1).executeTakeFirst(),
    db.selectFrom('case_items').select('id').where('case_id', '=', c.id).where('recorded_by', '=', user.id).limit(1).executeTakeFirst(),
  ])
  if (r || i) return
  throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such record.' })
}

/** A wrong signing password counts like a failed sign-in (throttled the same way). */
export async function checkSigningPassword(db: Db, user: User, password: string, ip: string) {
  const retry = await loginRetryAfter(db, user.email.toLowerCase(), ip)
  if (retry > 0) {
    throw createError({ statusCode: 429, statusMessage: 'Too Many Requests', message: `Too many attempts. Wait ${retry} seconds, then try again.` })
  }
  const row = await db.selectFrom('users').select('password_hash').where('id', '=', user.id).executeTakeFirstOrThrow()
  if (!(await verifyPassword(row.password_hash, password))) {
    await recordLoginAttempt(db, user.email.toLowerCase(), ip, false)
    throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: 'The password is not right.', data: { fields: { password: 'The password is not right.' } } })
  }
}
