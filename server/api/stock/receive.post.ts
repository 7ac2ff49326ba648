/**
 * POST /api/stock/receive — packs arrive: a GS1 or HIBCC scan fills item, lot and expiry; the count goes
 * onto that line at the chosen location. Idempotent by clientKey. Unknown DIs are refused (add the item
 * to the catalog first); expired packs are refused.
 */
import { ReceiveBody } from '../../../shared/schemas/stock'
import { dayInZone } from '../../../shared/utils/dates'
import { parseUdi } from '../../../shared/utils/udi'
import { facilityFor } from '../../queries/facilities'
import { itemByDi } from '../../queries/items'
import { addToLine, locationFor } from '../../queries/stock'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin', 'circulator')
  const b = await readBodyWith(event, ReceiveBody)
  const db = useDb()
  const prior = await db.selectFrom('stock_movements').select(['stock_line_id', 'delta']).where('client_key', '=', b.clientKey).executeTakeFirst()
  if (prior) return { stockLineId: prior.stock_line_id, received: prior.delta, replayed: true }
  const f = await db.selectFrom('facilities').select(['id', 'time_zone', 'gs_substitute']).where('id', '=', (await facilityFor(db, user.facilityId)).id).executeTakeFirstOrThrow()
  await locationFor(db, b.locationId, f.id)
  const today = dayInZone(Date.now(), f.time_zone)
  const p = parseUdi(b.scan, { today, ...(f.gs_substitute ? { gsSubstitute: f.gs_substitute } : {}) })
  const refuse = (code: string, message: string) => { throw createError({ statusCode: 422, statusMessage: 'Unprocessable Entity', message, data: { code, fields: { scan: message } } }) }
  if (!p.ok) refuse(p.error.code, p.error.message)
  if (!p.ok || !p.di) return refuse('missing_di', 'This barcode holds only the lot and expiry. Scan the product barcode on the same label.')
  if (p.expiry && p.expiry < today) refuse('expired', `Expired ${p.expiry} — do not put it on the shelf.`)
  const item = await itemByDi(db, p.issuer, p.di)
  if (!item) refuse('unknown_item', `The device identifier ${p.di} is not in the catalog. Add the item to the catalog first.`)
  return db.transaction().execute(async (trx) => {
    const line = await addToLine(trx, { locationId: b.locationId, itemId: item!.id, lot: p.lot ?? null, expiry: p.expiry ?? null, count: b.count })
    await trx.insertInto('stock_movements').values({ stock_line_id: line.id, delta: b.count, reason: 'receive', moved_by: user.id, client_key: b.clientKey }).execute()
    await writeAudit(trx, { actorId: user.id, action: 'stock.receive', entity: 'stock_line', entityId: line.id, details: { itemId: item!.id, lot: p.lot ?? null, expiry: p.expiry ?? null, count: b.count } }, event)
    setResponseStatus(event, 201)
    return { stockLineId: line.id, created: line.created, quarantined: line.quarantined, item: item!.description, lot: p.lot ?? null, expiry: p.expiry ?? null, received: b.count, replayed: false }
  })
})
