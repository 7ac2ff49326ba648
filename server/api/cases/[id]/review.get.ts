/** GET /api/cases/:id/review — what still stops the case from closing, in plain words. */
import { IdParams } from '../../../../shared/schemas/cases'
import { closeProblems } from '../../../../shared/utils/record'
import { loadCase } from '../../../queries/cases'
import { caseSnapshot } from '../../../queries/snapshot'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const db = useDb()
  const c = await loadCase(db, id, user)
  const problems = c.status === 'open' || c.status === 'planned' ? closeProblems(await caseSnapshot(db, id)) : []
  return { status: c.status, problems }
})
