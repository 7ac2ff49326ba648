import type { Db } from '../utils/db'

/** The facility a person works in; people without one (group-wide roles) get the first facility. */
export async function facilityFor(db: Db, facilityId: number | null) {
  let q = db.selectFrom('facilities').select(['id', 'code', 'name', 'time_zone']).orderBy('id').limit(1)
  if (facilityId) q = q.where('id', '=', facilityId)
  const f = await q.executeTakeFirst()
  if (!f) throw createError({ statusCode: 404, statusMessage: 'Not Found', message: 'No facility is set up yet. Ask an admin.' })
  return f
}
