/** GET /api/cases/:id/sizing — what the rules propose for each component, on the facility's live shelf. */
import { IdParams } from '../../../../shared/schemas/cases'
import { loadCase } from '../../../queries/cases'
import { caseSizing } from '../../../queries/sizing'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon', 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const db = useDb()
  await loadCase(db, id, user)
  return caseSizing(db, id)
})
