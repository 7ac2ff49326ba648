/**
 * POST /api/cases/:id/readings — record a gauge reading. Append-only: a second reading of the same kind
 * (and distal screw number) supersedes the first, which stays in the history. Idempotent by clientKey.
 */
import { IdParams, ReadingBody, READING_SPEC } from '../../../../shared/schemas/cases'
import { assertEditable, loadCase, openIfPlanned } from '../../../queries/cases'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'circulator', 'scrub', 'surgeon')
  const { id } = await paramsWith(event, IdParams)
  const body = await readBodyWith(event, ReadingBody)
  const db = useDb()

  const replay = await db.selectFrom('readings').selectAll().where('client_key', '=', body.clientKey).executeTakeFirst()
  if (replay) {
    if (replay.case_id !== id) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'This reading was already sent for another case.' })
    return { id: replay.id, supersedesId: replay.supersedes_id, replayed: true }
  }

  return await db.transaction().execute(async (trx) => {
    // Lock the case so two devices correcting the same reading form one chain, not two branches.
    const c = await loadCase(trx, id, user, { forUpdate: true })
    assertEditable(c)
    const previous = await trx.selectFrom('readings as r').select('r.id')
      .where('r.case_id', '=', id).where('r.kind', '=', body.kind).where('r.slot', '=', body.slot)
      .where(({ not, exists, selectFrom }) => not(exists(selectFrom('readings as n').select('n.id').whereRef('n.supersedes_id', '=', 'r.id'))))
      .orderBy('r.id', 'desc').limit(1).executeTakeFirst()
    const row = await trx.insertInto('readings').values({
      case_id: id, kind: body.kind, slot: body.slot, value: body.value, unit: READING_SPEC[body.kind].unit,
      supersedes_id: previous?.id ?? null, note: body.note ?? null, client_key: body.clientKey, entered_by: user.id,
    }).returning(['id', 'supersedes_id']).executeTakeFirstOrThrow()
    await openIfPlanned(trx, c)
    await writeAudit(trx, {
      actorId: user.id, action: previous ? 'reading.correct' : 'reading.add', entity: 'case', entityId: id,
      details: { readingId: row.id, kind: body.kind, slot: body.slot, value: body.value, supersedes: previous?.id ?? null },
    }, event)
    setResponseStatus(event, 201)
    return { id: row.id, supersedesId: row.supersedes_id, replayed: false }
  })
})
