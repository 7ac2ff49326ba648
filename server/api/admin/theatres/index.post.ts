/** POST /api/admin/theatres — add a theatre (operating room) that cases can be booked into. */
import { TheatreBody } from '../../../../shared/schemas/admin'
import { facilityFor } from '../../../queries/facilities'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'admin')
  const b = await readBodyWith(event, TheatreBody)
  const db = useDb()
  const f = await facilityFor(db, user.facilityId)
  try {
    return await db.transaction().execute(async (trx) => {
      const row = await trx.insertInto('theatres').values({ facility_id: f.id, code: b.code, name: b.name, active: b.active }).returning('id').executeTakeFirstOrThrow()
      await writeAudit(trx, { actorId: user.id, action: 'admin.theatre_add', entity: 'theatre', entityId: row.id, details: b }, event)
      setResponseStatus(event, 201)
      return { id: row.id }
    })
  } catch (e) {
    mapDbError(e, 'theatre', { code: b.code })
  }
})
