/**
 * PATCH /api/catalog/items/:id — edit or retire an item. Items are never deleted: once used in a case
 * the record points at them forever; retiring hides them from sizing and scanning lists.
 */
import { IdParams } from '../../../../shared/schemas/cases'
import { CatalogItemPatch } from '../../../../shared/schemas/catalog'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const { id } = await paramsWith(event, IdParams)
  const b = await readBodyWith(event, CatalogItemPatch)
  if (!Object.values(b).some((v) => v !== undefined)) {
    throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: 'Nothing to change: give the fields to update.', data: { fields: { _: 'Nothing to change.' } } })
  }
  return useDb().transaction().execute(async (trx) => {
    const before = await trx.selectFrom('catalog_items').selectAll().where('id', '=', id).forUpdate().executeTakeFirst()
    if (!before) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No such catalog item.' })
    await trx.updateTable('catalog_items').set({
      ...(b.active !== undefined ? { active: b.active } : {}), ...(b.description ? { description: b.description } : {}),
      ...(b.unitCost !== undefined ? { unit_cost: b.unitCost } : {}), ...(b.implantCard !== undefined ? { implant_card: b.implantCard } : {}),
      ...(b.material !== undefined ? { material: b.material } : {}), ...(b.reference !== undefined ? { reference: b.reference } : {}),
    }).where('id', '=', id).execute()
    await writeAudit(trx, { actorId: user.id, action: b.active === false ? 'catalog.retire' : 'catalog.update', entity: 'catalog_item', entityId: id, details: { before: { active: before.active, description: before.description, unit_cost: before.unit_cost }, after: b } }, event)
    return { ok: true }
  })
})
