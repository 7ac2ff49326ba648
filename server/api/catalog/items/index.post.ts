/** POST /api/catalog/items — add an item to the catalog (DI check digit validated). */
import { CatalogItemBody } from '../../../../shared/schemas/catalog'
import { makerId } from '../../../queries/catalog'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const b = await readBodyWith(event, CatalogItemBody)
  try {
    return await useDb().transaction().execute(async (trx) => {
      const row = await trx.insertInto('catalog_items').values({
        kind: b.kind, description: b.description, maker_id: await makerId(trx, b.maker), reference: b.reference ?? null,
        gtin: b.gtin ?? null, hibcc_di: b.hibccDi ?? null, diameter_mm: b.diameterMm ?? null, length_mm: b.lengthMm ?? null,
        angle_deg: b.angleDeg ?? null, side: b.side ?? null, nail_type: b.nailType ?? null, material: b.material, unit_cost: b.unitCost, implant_card: b.implantCard,
      }).returning('id').executeTakeFirstOrThrow()
      await writeAudit(trx, { actorId: user.id, action: 'catalog.create', entity: 'catalog_item', entityId: row.id, details: b }, event)
      setResponseStatus(event, 201)
      return { id: row.id }
    })
  } catch (e) {
    mapDbError(e, 'device identifier')
  }
})
