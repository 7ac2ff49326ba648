/** POST /api/recalls — start a recall campaign from a notice (title, reference, FDA class, maker, date received). */
import { NewRecallBody } from '../../../shared/schemas/recalls'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const body = await readBodyWith(event, NewRecallBody)
  const db = useDb()
  const prior = await db.selectFrom('recalls').select('id').where('client_key', '=', body.clientKey).executeTakeFirst()
  if (prior) return { id: prior.id, replayed: true }
  return db.transaction().execute(async (trx) => {
    const r = await trx.insertInto('recalls').values({
      title: body.title, notice_ref: body.noticeRef, fda_class: body.fdaClass, maker: body.maker, received_on: body.receivedOn,
      created_by: user.id, client_key: body.clientKey,
    }).returning('id').executeTakeFirstOrThrow()
    await writeAudit(trx, { actorId: user.id, action: 'recall.create', entity: 'recall', entityId: r.id, details: { title: body.title, fdaClass: body.fdaClass } }, event)
    setResponseStatus(event, 201)
    return { id: r.id, replayed: false }
  })
})
