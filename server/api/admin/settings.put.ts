/**
 * PUT /api/admin/settings — save the facility's settings.
 * The sizing rules are versioned: a changed profile is a new rule_profiles row (version n+1), never an update,
 * because each case keeps the version it was created under (POST /api/cases → latestRuleProfile) and is sized with it.
 * Time zone, records inbox and the wedge-scanner GS substitute change in place. Each change has its own audit row. Admin only.
 */
import { SettingsBody } from '../../../shared/schemas/admin'
import { facilityFor } from '../../queries/facilities'
import { latestRuleProfile } from '../../queries/cases'
import { facilitySettingsRow, facilityValues, profileValues, sameProfile, settingsView } from '../../queries/admin'

export default defineEventHandler(async (event) => {
  const { user } = await requireRole(event, 'admin')
  const body = await readBodyWith(event, SettingsBody)
  const db = useDb()
  const facility = await facilityFor(db, user.facilityId)

  const result = await db.transaction().execute(async (trx) => {
    // the facility row lock serialises two admins saving at once, so versions never collide
    const f = await facilitySettingsRow(trx, facility.id, { forUpdate: true })
    const latest = await latestRuleProfile(trx, facility.id)
    if (body.baseVersion != null && (latest?.version ?? 0) !== body.baseVersion) {
      throw createError({
        statusCode: 409, statusMessage: 'Conflict',
        message: `Someone saved version ${latest?.version ?? 0} of the sizing rules while you were editing. Reload Settings, check their values, then save again.`,
      })
    }

    const wanted = { nailClearanceMm: body.nailClearanceMm, distalScrewRounding: body.distalScrewRounding, tadLimitMm: body.tadLimitMm }
    let newVersion: number | null = null
    if (!latest || !sameProfile(profileValues(latest), wanted)) {
      const version = (latest?.version ?? 0) + 1
      const row = await trx.insertInto('rule_profiles').values({
        facility_id: facility.id, version, nail_clearance_mm: wanted.nailClearanceMm, distal_screw_rounding: wanted.distalScrewRounding,
        tad_limit_mm: wanted.tadLimitMm, created_by: user.id,
      }).returning('id').executeTakeFirstOrThrow()
      await writeAudit(trx, {
        actorId: user.id, action: 'rule_profile.create', entity: 'rule_profile', entityId: row.id,
        details: { facilityId: facility.id, version, before: latest ? { version: latest.version, ...profileValues(latest) } : null, after: { version, ...wanted } },
      }, event)
      newVersion = version
    }

    const before = facilityValues(f)
    const after = { timeZone: body.timeZone, gsSubstitute: body.gsSubstitute, recordsInbox: body.recordsInbox }
    const facilityChanged = before.timeZone !== after.timeZone || before.gsSubstitute !== after.gsSubstitute || before.recordsInbox !== after.recordsInbox
    if (facilityChanged) {
      await trx.updateTable('facilities')
        .set({ time_zone: after.timeZone, gs_substitute: after.gsSubstitute, records_inbox: after.recordsInbox })
        .where('id', '=', facility.id).execute()
      await writeAudit(trx, { actorId: user.id, action: 'settings.update', entity: 'facility', entityId: facility.id, details: { before, after } }, event)
    }
    return { newVersion, facilityChanged }
  })
  return { ...result, ...(await settingsView(db, facility.id)) }
})
