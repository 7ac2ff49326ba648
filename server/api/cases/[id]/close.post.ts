/**
 * POST /api/cases/:id/close — the circulator closes the log: every item dispositioned, unmatched items
 * resolved, checks acknowledged. Otherwise 409 with the list of what is missing. Sends the surgeon a
 * signing request (through the outbox).
 */
import { sql } from 'kysely'
import { IdParams } from '../../../../shared/schemas/cases'
import { closeProblems } from '../../../../shared/utils/record'
import { loadCase } from '../../../queries/cases'
import { caseSnapshot } from '../../../queries/snapshot'
import { enqueueMail } from '../../../utils/mail'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'surgeon')
  const { id } = await paramsWith(event, IdParams)
  const db = useDb()
  return db.transaction().execute(async (trx) => {
    const c = await loadCase(trx, id, user, { forUpdate: true })
    if (c.status === 'closed' || c.status === 'signed') {
      throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `This case is already ${c.status}.` })
    }
    const snapshot = await caseSnapshot(trx, id)
    const problems = closeProblems(snapshot)
    if (problems.length) {
      throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'The case cannot close yet.', data: { problems } })
    }
    await trx.updateTable('cases').set({ status: 'closed', closed_at: sql`now()`, circulator_id: c.circulator_id ?? (user.role === 'circulator' ? user.id : null) }).where('id', '=', id).execute()
    const surgeon = await trx.selectFrom('users').select(['email', 'name']).where('id', '=', c.surgeon_id).executeTakeFirstOrThrow()
    const link = `${getRequestURL(event).origin}/cases/${id}/record`
    await enqueueMail(trx, {
      to: surgeon.email, kind: 'signing_request', ref: `case:${id}`, dedupeKey: `signing_request:${id}:${Date.now()}`,
      subject: `Implant record to sign: ${snapshot.patient.familyName}, MRN ${snapshot.patient.mrn}`,
      text: `${surgeon.name},\n\nThe implant record of ${snapshot.patient.familyName}, ${snapshot.patient.givenName} (MRN ${snapshot.patient.mrn}), ${snapshot.case.theatre}, is closed and waits for your signature.\n\nReview and sign: ${link}\n\nIsthmus`,
    })
    await writeAudit(trx, { actorId: user.id, action: 'case.close', entity: 'case', entityId: id }, event)
    await notifyLive(trx, { caseId: id, kind: 'status' })
    return { status: 'closed' }
  })
})
