/** POST /api/cases/:id/reopen — back to open before signing (something was missed). */
import { IdParams } from '../../../../shared/schemas/cases'
import { loadCase } from '../../../queries/cases'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'surgeon')
  const { id } = await paramsWith(event, IdParams)
  return useDb().transaction().execute(async (trx) => {
    const c = await loadCase(trx, id, user, { forUpdate: true })
    if (c.status !== 'closed') {
      throw createError({ statusCode: 409, statusMessage: 'Conflict', message: c.status === 'signed' ? 'A signed record cannot reopen. Add an addendum instead.' : 'Only a closed case can reopen.' })
    }
    await trx.updateTable('cases').set({ status: 'open', closed_at: null }).where('id', '=', id).execute()
    await writeAudit(trx, { actorId: user.id, action: 'case.reopen', entity: 'case', entityId: id }, event)
    await notifyLive(trx, { caseId: id, kind: 'status' })
    return { status: 'open' }
  })
})
