/**
 * POST /api/cases/:id/decisions — confirm the proposed size, or choose another with a reason.
 * The nail also needs the acknowledgement that the aiming guide is set to the nail's angle and side.
 * Stored with the engine's full result and the rule profile it used. Idempotent by clientKey.
 */
import { DecisionBody, decisionFor, IdParams } from '../../../../shared/schemas/cases'
import { assertEditable, loadCase, openIfPlanned } from '../../../queries/cases'
import { caseSizing } from '../../../queries/sizing'

function invalid(fields: Record<string, string>): never {
  throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: Object.values(fields).join(' '), data: { fields } })
}

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'surgeon', 'circulator')
  const { id } = await paramsWith(event, IdParams)
  const body = await readBodyWith(event, DecisionBody)
  const db = useDb()

  const replay = await db.selectFrom('sizing_decisions').select(['id', 'case_id']).where('client_key', '=', body.clientKey).executeTakeFirst()
  if (replay) return { id: replay.id, replayed: true }

  return await db.transaction().execute(async (trx) => {
    const c = await loadCase(trx, id, user, { forUpdate: true })
    assertEditable(c)
    const sizing = await caseSizing(trx, id)
    const comp = body.component === 'nail' ? sizing.nail
      : body.component === 'head_element' ? sizing.headElement
        : sizing.distal.find((d) => d.slot === body.slot)
    if (!comp || comp.missing.length) {
      invalid({ component: comp ? `Enter ${comp.missing.join(', ')} first.` : 'Enter the depth reading for this screw first.' })
    }
    const proposedId = comp.ideal?.id ?? null
    const allowed = [comp.ideal, ...comp.alternatives].filter(Boolean).map((i) => i!.id)
    const item = await trx.selectFrom('catalog_items').select(['id', 'kind', 'active']).where('id', '=', body.chosenItemId).executeTakeFirst()
    if (!item || !item.active || item.kind !== body.component) invalid({ chosenItemId: 'Choose a size of this kind from the catalog.' })
    if (body.component === 'nail' && !comp.options.some((o) => o.id === body.chosenItemId) && body.chosenItemId !== proposedId) {
      invalid({ chosenItemId: 'Choose a nail for this side and procedure that is on the shelf.' })
    }
    const differs = body.chosenItemId !== proposedId
    const checked = decisionFor(proposedId).safeParse(body)
    if (!checked.success) invalid(Object.fromEntries(checked.error.issues.map((i) => [String(i.path[0]), i.message])))
    const row = await trx.insertInto('sizing_decisions').values({
      case_id: id, component: body.component, slot: body.component === 'distal_screw' ? body.slot : 0,
      proposed_item_id: proposedId, chosen_item_id: body.chosenItemId,
      engine: JSON.stringify({ ideal: proposedId, alternatives: comp.alternatives.map((a) => a.id), warnings: comp.warnings, reasons: comp.reasons, rules: sizing.rules }),
      rule_profile_id: c.rule_profile_id, reason: differs ? body.reason! : (body.reason || null),
      guide_acknowledged: body.guideAcknowledged === true, client_key: body.clientKey, decided_by: user.id,
    }).returning('id').executeTakeFirstOrThrow()
    await openIfPlanned(trx, c)
    await writeAudit(trx, {
      actorId: user.id, action: differs ? 'sizing.override' : 'sizing.confirm', entity: 'case', entityId: id,
      details: { decisionId: row.id, component: body.component, slot: body.slot, proposed: proposedId, chosen: body.chosenItemId, inAlternatives: allowed.includes(body.chosenItemId), reason: body.reason ?? null, guideAcknowledged: body.guideAcknowledged === true },
    }, event)
    setResponseStatus(event, 201)
    return { id: row.id, replayed: false }
  })
})
