/**
 * POST /api/cases/:id/items — log a pack opened for the case from its UDI scan (camera, wedge scanner,
 * photo) or, without a barcode, by hand. Runs the checks (expiry, recall, quarantine, duplicate serial,
 * size and side against the confirmed choice, catalog match), then writes the item, its stock movement,
 * the audit row and the scan event in one transaction. The same clientKey twice returns the first answer.
 * Answers: 201 accepted or check; 422 refused (unreadable, expired, recalled, quarantined); 409 duplicate
 * serial or a case that is no longer open. Every attempt, refused ones too, is kept in scan_events.
 */
import type { H3Event } from 'h3'
import { IdParams } from '../../../../../shared/schemas/cases'
import { ScanBody, type ScanBody as ScanBodyT } from '../../../../../shared/schemas/items'
import { decideScan, type CatalogFacts } from '../../../../../shared/utils/scan-checks'
import { isValidGtin, parseUdi, toHri } from '../../../../../shared/utils/udi'
import { dayInZone } from '../../../../../shared/utils/dates'
import { assertEditable, loadCase, openIfPlanned } from '../../../../queries/cases'
import { catalogFacts, consumeOne, itemByDi, recallsFor, shelfLineFor } from '../../../../queries/items'
import { noteLowStock } from '../../../../queries/replenishment'
import type { SignedIn } from '../../../../utils/session'

interface Outcome { status: number; body: Record<string, unknown>; replayed?: boolean }

function refused(status: number, code: string, message: string, source?: string): Outcome {
  return { status, body: { result: 'refused', code, message, ...(source ? { source } : {}), checks: [] } }
}

async function remember(db: ReturnType<typeof useDb>, caseId: number, body: ScanBodyT, user: SignedIn['user'], o: Outcome) {
  await db.insertInto('scan_events').values({
    case_id: caseId, client_key: body.clientKey, raw: body.scan ?? null, source: body.source,
    result: o.body.result as 'refused', code: (o.body.code as string) ?? null, status_code: o.status,
    response: JSON.stringify(o.body), scanned_by: user.id,
  }).onConflict((oc) => oc.column('client_key').doNothing()).execute()
}

async function replay(event: H3Event, clientKey: string, caseId: number) {
  const prior = await useDb().selectFrom('scan_events').select(['case_id', 'status_code', 'response']).where('client_key', '=', clientKey).executeTakeFirst()
  if (!prior) return null
  if (prior.case_id !== caseId) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: 'This scan was already sent for another case.' })
  setResponseStatus(event, prior.status_code)
  return { ...(prior.response as Record<string, unknown>), replayed: true }
}

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'scrub', 'circulator', 'surgeon')
  const { id } = await paramsWith(event, IdParams)
  const body = await readBodyWith(event, ScanBody)
  const db = useDb()

  const again = await replay(event, body.clientKey, id)
  if (again) return again

  const c = await loadCase(db, id, user)
  const facility = await db.selectFrom('facilities').select(['time_zone', 'gs_substitute']).where('id', '=', c.facility_id).executeTakeFirstOrThrow()
  const today = dayInZone(Date.now(), facility.time_zone)

  // What the pack says: its device identifier and production identifiers.
  let unit: { issuer: 'GS1' | 'HIBCC'; di: string; lot: string | null; serial: string | null; expiry: string | null; manufactured: string | null; hri: string | null }
  let manualItemId: number | undefined
  if (body.source === 'manual') {
    const m = body.manual!
    let di = m.gtin ? m.gtin.padStart(14, '0') : null
    let issuer: 'GS1' | 'HIBCC' = 'GS1'
    if (di && !isValidGtin(di)) {
      throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: 'The GTIN check digit does not match. Type it again from the label.', data: { fields: { 'manual.gtin': 'The GTIN check digit does not match. Type it again from the label.' } } })
    }
    if (!di && m.itemId) {
      const item = await db.selectFrom('catalog_items').select(['id', 'gtin', 'hibcc_di']).where('id', '=', m.itemId).executeTakeFirst()
      if (!item || (!item.gtin && !item.hibcc_di)) {
        throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: 'Choose an item from the catalog.', data: { fields: { 'manual.itemId': 'Choose an item from the catalog.' } } })
      }
      di = item.gtin ?? item.hibcc_di
      issuer = item.gtin ? 'GS1' : 'HIBCC'
      manualItemId = item.id
    }
    unit = { issuer, di: di!, lot: m.lot || null, serial: m.serial || null, expiry: m.expiry ?? null, manufactured: null, hri: null }
  } else {
    const p = parseUdi(body.scan!, { today, ...(facility.gs_substitute ? { gsSubstitute: facility.gs_substitute } : {}) })
    if (!p.ok) {
      const o = refused(422, p.error.code, p.error.message)
      await remember(db, id, body, user, o)
      setResponseStatus(event, o.status)
      return o.body
    }
    if (!p.di) {
      const o = refused(422, 'missing_di', 'This barcode holds only the lot and expiry. Scan the product barcode on the same label.')
      await remember(db, id, body, user, o)
      setResponseStatus(event, o.status)
      return o.body
    }
    unit = { issuer: p.issuer, di: p.di, lot: p.lot ?? null, serial: p.serial ?? null, expiry: p.expiry ?? null, manufactured: p.manufactured ?? null, hri: toHri(p) || null }
  }

  let outcome: Outcome
  try {
    outcome = await db.transaction().execute(async (trx): Promise<Outcome> => {
      const locked = await loadCase(trx, id, user, { forUpdate: true })
      // the same scan may have landed while we waited for the lock (two devices, or a retry)
      const landed = await trx.selectFrom('scan_events').select(['status_code', 'response']).where('client_key', '=', body.clientKey).executeTakeFirst()
      if (landed) return { status: landed.status_code, body: { ...(landed.response as Record<string, unknown>), replayed: true }, replayed: true }
      try {
        assertEditable(locked)
      } catch (e) {
        return refused(409, 'case_locked', (e as { message: string }).message)
      }
      const catalog = manualItemId
        ? await trx.selectFrom('catalog_items').selectAll().where('id', '=', manualItemId).executeTakeFirst()
        : await itemByDi(trx, unit.issuer, unit.di)

      if (unit.serial) {
        const seen = await trx.selectFrom('case_items').select(['case_id']).where('di', '=', unit.di).where('serial', '=', unit.serial)
          .where('disposition', 'in', ['implanted', 'wasted']).executeTakeFirst()
        if (seen && body.disposition !== 'explanted') {
          return refused(409, 'duplicate_serial', `Serial ${unit.serial} is already recorded${seen.case_id === id ? ' in this case' : ' for another patient'}. One unit is used once — check the pack.`, '21 CFR 801.3 (a serial identifies one unit)')
        }
      }

      let confirmed: CatalogFacts[] = []
      if (catalog && ['nail', 'head_element', 'distal_screw'].includes(catalog.kind)) {
        const rows = await trx.selectFrom('sizing_decisions as d').innerJoin('catalog_items as ci', 'ci.id', 'd.chosen_item_id')
          .select(['d.id', 'd.slot', 'ci.kind', 'ci.description', 'ci.diameter_mm', 'ci.length_mm', 'ci.angle_deg', 'ci.side'])
          .where('d.case_id', '=', id).where('d.component', '=', catalog.kind as 'nail').orderBy('d.id').execute()
        const latest = new Map<number, (typeof rows)[number]>()
        for (const r of rows) latest.set(r.slot, r)
        confirmed = [...latest.values()].map(catalogFacts)
      }
      const recalls = await recallsFor(trx, unit)
      const lines = catalog ? await shelfLineFor(trx, locked.facility_id, catalog.id, unit.lot) : []
      const usable = lines.find((l) => !l.quarantined && l.on_hand > 0)
      const quarantined = lines.some((l) => l.quarantined) && !usable

      const d = decideScan({
        unit, item: catalog ? catalogFacts(catalog) : null, surgeryDay: today, caseSide: locked.side, disposition: body.disposition,
        confirmed, recalls: recalls.map((r) => ({ title: r.title, noticeRef: r.notice_ref })), quarantined, notOnShelf: !!catalog && !usable && !quarantined,
      })
      if (d.result === 'refused') return refused(422, d.refusal!.code, d.refusal!.message, d.refusal!.source)

      const item = await trx.insertInto('case_items').values({
        case_id: id, item_id: catalog?.id ?? null, raw_scan: body.scan ?? null, issuer: unit.issuer, di: unit.di, lot: unit.lot,
        serial: unit.serial, expiry: unit.expiry, manufactured: unit.manufactured, hri: unit.hri, source: body.source,
        disposition: body.disposition, waste_reason: body.wasteReason ?? null, waste_note: body.wasteNote || null,
        checks: JSON.stringify(d.checks), stock_line_id: usable?.id ?? null, client_key: body.clientKey, recorded_by: user.id,
      }).returning(['id', 'recorded_at']).executeTakeFirstOrThrow()

      // Opening a pack consumes it, implanted or wasted: one decrement per item, never two.
      if (usable && body.disposition !== 'explanted') {
        await consumeOne(trx, usable.id, { reason: body.disposition === 'wasted' ? 'waste' : 'implant', caseItemId: item.id, movedBy: user.id })
        await noteLowStock(trx, usable.id, today)
      }
      await openIfPlanned(trx, locked)
      await writeAudit(trx, {
        actorId: user.id, action: 'item.add', entity: 'case', entityId: id,
        details: { caseItemId: item.id, itemId: catalog?.id ?? null, di: unit.di, lot: unit.lot, serial: unit.serial, disposition: body.disposition, source: body.source, result: d.result },
      }, event)
      const firstCheck = d.checks.find((x) => x.needsAck) ?? d.checks.find((x) => x.code === 'unmatched')
      const o: Outcome = {
        status: 201,
        body: {
          result: d.result,
          code: firstCheck?.code ?? null,
          message: d.result === 'accepted'
            ? `Accepted: ${catalog?.description ?? unit.di}${unit.lot ? `, lot ${unit.lot}` : ''}${unit.serial ? `, serial ${unit.serial}` : ''}.`
            : firstCheck!.message,
          checks: d.checks,
          item: { id: item.id, description: catalog?.description ?? null, kind: catalog?.kind ?? null, di: unit.di, lot: unit.lot, serial: unit.serial, expiry: unit.expiry, disposition: body.disposition },
        },
      }
      await trx.insertInto('scan_events').values({
        case_id: id, client_key: body.clientKey, raw: body.scan ?? null, source: body.source, result: d.result, code: firstCheck?.code ?? null,
        status_code: 201, response: JSON.stringify(o.body), case_item_id: item.id, scanned_by: user.id,
      }).execute()
      await notifyLive(trx, { caseId: id, kind: 'item', id: item.id })
      return o
    })
  } catch (e) {
    const err = e as { code?: string; constraint?: string }
    if (err.code === '23505' && (err.constraint === 'case_items_client_key_key' || err.constraint === 'scan_events_client_key_key')) {
      // the same scan arrived twice at once: the first one won; answer with its result
      const again2 = await replay(event, body.clientKey, id)
      if (again2) return again2
    }
    if (err.code === '23505' && err.constraint === 'case_items_one_serial') {
      outcome = refused(409, 'duplicate_serial', `Serial ${unit.serial} is already recorded. One unit is used once — check the pack.`, '21 CFR 801.3 (a serial identifies one unit)')
    } else {
      throw e
    }
  }
  if (outcome.status !== 201 && !outcome.replayed) await remember(db, id, body, user, outcome)
  setResponseStatus(event, outcome.status)
  return outcome.body
})
