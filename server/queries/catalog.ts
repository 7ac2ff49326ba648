import type { Db } from '../utils/db'

/** The maker's id by name, added when new (the item master names makers as text). */
export async function makerId(db: Db, name: string | null | undefined): Promise<number | null> {
  const n = name?.trim()
  if (!n) return null
  const row = await db.insertInto('makers').values({ name: n }).onConflict((oc) => oc.column('name').doUpdateSet({ name: n })).returning('id').executeTakeFirstOrThrow()
  return row.id
}
