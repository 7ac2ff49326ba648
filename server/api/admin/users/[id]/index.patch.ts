/**
 * PATCH /api/admin/users/:id — change a person's name or role, or deactivate / reactivate the account.
 * An admin cannot deactivate or demote themselves (409), so a facility is never left locked out by a slip.
 * A deactivated or re-roled person's sessions stop at the next request after requireRole's short cache. Admin only.
 */
import { UserParams, UserUpdateBody } from '../../../../../shared/schemas/admin'
import { facilityFor } from '../../../../queries/facilities'
import { auditablePerson, personInFacility, personView } from '../../../../queries/admin'

export default defineEventHandler(async (event) => {
  const session = await requireRole(event, 'admin')
  const { user } = session
  const { id } = await paramsWith(event, UserParams)
  const body = await readBodyWith(event, UserUpdateBody)
  const db = useDb()
  const facility = await facilityFor(db, user.facilityId)

  if (id === user.id && body.active === false) {
    throw createError({
      statusCode: 409, statusMessage: 'Conflict',
      message: 'You cannot deactivate your own account. Ask another admin to do it.',
      data: { fields: { active: 'You cannot deactivate your own account.' } },
    })
  }
  if (id === user.id && body.role !== undefined && body.role !== 'admin') {
    throw createError({
      statusCode: 409, statusMessage: 'Conflict',
      message: 'You cannot take the admin role from yourself. Ask another admin to do it.',
      data: { fields: { role: 'You cannot take the admin role from yourself.' } },
    })
  }

  const result = await db.transaction().execute(async (trx) => {
    const before = await personInFacility(trx, id, facility.id, { forUpdate: true })
    const next = {
      name: body.name ?? before.name,
      role: body.role ?? before.role,
      active: body.active ?? before.active,
    }
    const changed = next.name !== before.name || next.role !== before.role || next.active !== before.active
    if (!changed) return { person: personView(before), changed: false }
    await trx.updateTable('users').set({ ...next, updated_at: new Date() }).where('id', '=', id).execute()
    const after = await personInFacility(trx, id, facility.id)
    const action = before.active && !after.active ? 'user.deactivate' : !before.active && after.active ? 'user.reactivate' : 'user.update'
    await writeAudit(trx, {
      actorId: user.id, action, entity: 'user', entityId: id,
      details: { before: auditablePerson(before), after: auditablePerson(after) },
    }, event)
    return { person: personView(after), changed: true }
  })
  // the top bar shows the admin's own name from the session: keep it in step once the change is committed
  if (id === user.id && result.person.name !== user.name) {
    await setUserSession(event, { user: { ...user, name: result.person.name }, loggedInAt: session.loggedInAt, lastSeenAt: session.lastSeenAt })
  }
  return result
})
