/**
 * PATCH /api/admin/theatres/:id — rename a theatre, or close it to new bookings (active: false).
 * Theatres are never deleted: past cases and their signed records name the room they were done in.
 */
import { IdParams } from '../../../../shared/schemas/cases'
import { TheatreBody } from '../../../../shared/schemas/admin'
import { facilityFor } from '../../../queries/facilities'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'admin')
  const { id } = await paramsWith(event, IdParams)
  const b = await readBodyWith(event, TheatreBody)
  const db = useDb()
  const f = await facilityFor(db, user.facilityId)
  const before = await db.selectFrom('theatres').selectAll().where('id', '=', id).where('facility_id', '=', f.id).executeTakeFirst()
  if (!before) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such theatre at this facility.' })
  try {
    return await db.transaction().execute(async (trx) => {
      await trx.updateTable('theatres').set({ code: b.code, name: b.name, active: b.active }).where('id', '=', id).execute()
      await writeAudit(trx, {
        actorId: user.id, action: 'admin.theatre_change', entity: 'theatre', entityId: id,
        details: { before: { code: before.code, name: before.name, active: before.active }, after: b },
      }, event)
      return { id }
    })
  } catch (e) {
    mapDbError(e, 'theatre', { code: b.code })
  }
})
