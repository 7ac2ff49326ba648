/**
 * POST /api/catalog/import { csv, mapping?, dryRun } — an item master as CSV, upserted by device
 * identifier. Every row is validated first; a dry run (the default) only reports. A real import writes
 * all rows in one transaction, or none when any row is bad: never half a file.
 */
import Papa from 'papaparse'
import { sql } from 'kysely'
import { CatalogImportBody } from '../../../shared/schemas/catalog'
import { CATALOG_PAPA_CONFIG, createCatalogValidator, guessMapping, mappingProblems, type CatalogItemInput, type CatalogMapping } from '../../../shared/utils/catalog-csv'
import { makerId } from '../../queries/catalog'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'coordinator', 'admin')
  const body = await readBodyWith(event, CatalogImportBody)
  const text = body.csv.replace(/^\uFEFF/, '')
  // the header row first, so the mapping is known before the first data row streams past
  const headers = (Papa.parse<string[]>(text, { preview: 1 }).data[0] ?? []).map(CATALOG_PAPA_CONFIG.transformHeader)
  const mapping = (body.mapping ?? guessMapping(headers)) as CatalogMapping
  const problems = mappingProblems(mapping)
  const validator = createCatalogValidator(mapping)
  const items: CatalogItemInput[] = []
  const errors = [...problems]
  let rows = 0
  // row by row (papaparse's step), so a large file is validated without holding every parsed row at once
  Papa.parse<Record<string, string>>(text, {
    ...CATALOG_PAPA_CONFIG,
    step: (r) => {
      rows += 1
      if (problems.length) return
      const v = validator.push(r.data, rows)
      if (v.item) items.push(v.item)
      errors.push(...v.errors)
    },
  })
  const report = { rows, valid: items.length, errors: errors.slice(0, 500), errorCount: errors.length, mapping, headers }
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
        gtin: it.gtin, hibcc_di: it.hibcc_di, diameter_mm: it.diameter_mm, length_mm: it.length_mm, angle_deg: it.angle_deg,
        side: it.side, nail_type: it.nail_type, material: it.material, unit_cost: it.unit_cost, implant_card: it.implant_card,
      }))
      const withGtin = values.filter((v) => v.gtin)
      const withHibcc = values.filter((v) => !v.gtin)
      // upsert by DI; xmax = 0 tells a fresh insert from an update
      for (const [rows, col] of [[withGtin, 'gtin'], [withHibcc, 'hibcc_di']] as const) {
        if (!rows.length) continue
        const r = await trx.insertInto('catalog_items').values(rows)
          .onConflict((oc) => oc.column(col).doUpdateSet((eb) => ({
            description: eb.ref('excluded.description'), maker_id: eb.ref('excluded.maker_id'), reference: eb.ref('excluded.reference'),
            material: eb.ref('excluded.material'), unit_cost: eb.ref('excluded.unit_cost'), implant_card: eb.ref('excluded.implant_card'),
            // a label with both identifiers: the file adds the other one, never erases it
            ...(col === 'gtin' ? { hibcc_di: sql`coalesce(excluded.hibcc_di, catalog_items.hibcc_di)` } : {}),
            // an item already in a case record keeps its kind and size, as in the edit form
            kind: keepIfUsed('kind'), diameter_mm: keepIfUsed('diameter_mm'), length_mm: keepIfUsed('length_mm'),
            angle_deg: keepIfUsed('angle_deg'), side: keepIfUsed('side'), nail_type: keepIfUsed('nail_type'),
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

const keepIfUsed = (col: 'kind' | 'diameter_mm' | 'length_mm' | 'angle_deg' | 'side' | 'nail_type') =>
  sql<any>`CASE WHEN EXISTS (SELECT 1 FROM case_items u WHERE u.item_id = catalog_items.id) THEN ${sql.ref(`catalog_items.${col}`)} ELSE ${sql.ref(`excluded.${col}`)} END`
