/**
 * POST /api/catalog/import { csv, mapping?, dryRun } — an item master as CSV, upserted by device
 * identifier. Every row is validated first; a dry run (the default) only reports. A real import writes
 * all rows in one transaction, or none when any row is bad: never half a file.
 */
import Papa from 'papaparse'
import { sql } from 'kysely'
import { CatalogImportBody } from '../../../shared/schemas/catalog'
import { createCatalogValidator, guessMapping, mappingProblems, type CatalogItemInput, type CatalogMapping } from '../../../shared/utils/catalog-csv'
import { makerId } from '../../queries/catalog'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const body = await readBodyWith(event, CatalogImportBody)
  const parsed = Papa.parse<Record<string, string>>(body.csv.replace(/^\uFEFF/, ''), { header: true, skipEmptyLines: 'greedy' })
  const headers = parsed.meta.fields ?? []
  const mapping = (body.mapping ?? guessMapping(headers)) as CatalogMapping
  const problems = mappingProblems(mapping)
  const validator = createCatalogValidator(mapping)
  const items: CatalogItemInput[] = []
  const errors = [...problems]
  if (!problems.length) {
    parsed.data.forEach((row, i) => {
      const r = validator.push(row, i + 1)
      if (r.item) items.push(r.item)
      errors.push(...r.errors)
    })
  }
  const report = { rows: parsed.data.length, valid: items.length, errors: errors.slice(0, 500), errorCount: errors.length, mapping, headers }
  if (body.dryRun) return { ...report, imported: 0, created: 0, updated: 0 }
  if (errors.length) {
    throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: `${errors.length} ${errors.length === 1 ? 'problem' : 'problems'} in the file; nothing was imported.`, data: report })
  }
  return useDb().transaction().execute(async (trx) => {
    const makers = new Map<string, number | null>()
    let created = 0
    for (let i = 0; i < items.length; i += 1000) {
      const chunk = items.slice(i, i + 1000)
      for (const it of chunk) if (it.maker && !makers.has(it.maker)) makers.set(it.maker, await makerId(trx, it.maker))
      const values = chunk.map((it) => ({
        kind: it.kind, description: it.description, maker_id: it.maker ? makers.get(it.maker)! : null, reference: it.reference,
        gtin: it.gtin, hibcc_di: it.gtin ? null : it.hibcc_di, diameter_mm: it.diameter_mm, length_mm: it.length_mm, angle_deg: it.angle_deg,
        side: it.side, nail_type: it.nail_type, material: it.material, unit_cost: it.unit_cost, implant_card: it.implant_card,
      }))
      const withGtin = values.filter((v) => v.gtin)
      const withHibcc = values.filter((v) => !v.gtin)
      // upsert by DI; xmax = 0 tells a fresh insert from an update
      for (const [rows, col] of [[withGtin, 'gtin'], [withHibcc, 'hibcc_di']] as const) {
        if (!rows.length) continue
        const r = await trx.insertInto('catalog_items').values(rows)
          .onConflict((oc) => oc.column(col).doUpdateSet((eb) => ({
            kind: eb.ref('excluded.kind'), description: eb.ref('excluded.description'), maker_id: eb.ref('excluded.maker_id'), reference: eb.ref('excluded.reference'),
            diameter_mm: eb.ref('excluded.diameter_mm'), length_mm: eb.ref('excluded.length_mm'), angle_deg: eb.ref('excluded.angle_deg'), side: eb.ref('excluded.side'),
            nail_type: eb.ref('excluded.nail_type'), material: eb.ref('excluded.material'), unit_cost: eb.ref('excluded.unit_cost'), implant_card: eb.ref('excluded.implant_card'),
          })))
          .returning(sql<boolean>`(xmax = 0)`.as('inserted'))
          .execute().catch(async () => null)
        if (r === null) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'An item in the file clashes with the catalog. Nothing was imported.' })
        created += r.filter((x) => x.inserted).length
      }
    }
    await writeAudit(trx, { actorId: user.id, action: 'catalog.import', entity: 'catalog_item', details: { rows: items.length, created } }, event)
    return { ...report, imported: items.length, created, updated: items.length - created }
  })
})
