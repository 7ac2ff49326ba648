/**
 * PUT /api/catalog/items/:id — correct an item as a whole, with the same checks as adding one.
 * Once an item is in a case, its device identifier, kind and size are what the records and traces say
 * it was: those stay fixed (retire it and add the right item instead); its words and cost may change.
 */
import { IdParams } from '../../../../shared/schemas/cases'
import { CatalogItemBody } from '../../../../shared/schemas/catalog'
import { makerId } from '../../../queries/catalog'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const b = await readBodyWith(event, CatalogItemBody)
  try {
    return await useDb().transaction().execute(async (trx) => {
      const before = await trx.selectFrom('catalog_items').selectAll().where('id', '=', id).forUpdate().executeTakeFirst()
      if (!before) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such catalog item.' })
      const identity = {
        kind: b.kind, gtin: b.gtin ?? null, hibcc_di: b.hibccDi ?? null, diameter_mm: b.diameterMm ?? null, length_mm: b.lengthMm ?? null,
        angle_deg: b.angleDeg ?? null, side: b.side ?? null, nail_type: b.nailType ?? null,
      }
      const num = (v: unknown) => (v == null ? null : Number(v))
      const changed = (Object.keys(identity) as (keyof typeof identity)[]).filter((k) =>
        (['diameter_mm', 'length_mm', 'angle_deg'].includes(k) ? num(before[k]) !== num(identity[k]) : (before[k] ?? null) !== identity[k]))
      if (changed.length) {
        const used = await trx.selectFrom('case_items').select('id').where('item_id', '=', id).limit(1).executeTakeFirst()
        if (used) {
          throw createError({
            statusCode: 409, statusMessage: 'Conflict',
            message: 'This item is in a case record, so its kind, device identifier and size stay as they are. Retire it and add the right item instead.',
            data: { fields: Object.fromEntries(changed.map((k) => [FIELD[k], 'Fixed: the item is in a case record.'])) },
          })
        }
      }
      await trx.updateTable('catalog_items').set({
        ...identity, description: b.description, maker_id: await makerId(trx, b.maker), reference: b.reference ?? null,
        material: b.material, unit_cost: b.unitCost, implant_card: b.implantCard,
      }).where('id', '=', id).execute()
      await writeAudit(trx, {
        actorId: user.id, action: 'catalog.update', entity: 'catalog_item', entityId: id,
        details: { before: { ...pick(before), description: before.description, unit_cost: before.unit_cost }, after: b },
      }, event)
      return { id }
    })
  } catch (e) {
    mapDbError(e, 'device identifier')
  }
})

const FIELD = {
  kind: 'kind', gtin: 'gtin', hibcc_di: 'hibccDi', diameter_mm: 'diameterMm', length_mm: 'lengthMm', angle_deg: 'angleDeg', side: 'side', nail_type: 'nailType',
} as const
function pick(r: Record<string, unknown>) {
  return Object.fromEntries(Object.keys(FIELD).map((k) => [k, r[k] ?? null]))
}
