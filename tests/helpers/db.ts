// Direct access to the test database, for arranging data and for checking rows after an HTTP call.
import { randomUUID } from 'node:crypto'
import { Migrator, sql, type Kysely } from 'kysely'
import { FolderMigrationProvider } from '../../db/migration-provider'
import { createDb } from '../../db/connection'
import { hashPassword } from '../../db/password'
import type { Database, Role } from '../../db/types'
import { TEST_DATABASE_URL } from './env'

let shared: Kysely<Database> | undefined
export function testDb(): Kysely<Database> {
  shared ??= createDb(TEST_DATABASE_URL)
  return shared
}
export async function closeTestDb() {
  await shared?.destroy()
  shared = undefined
}

/** A short unique tag, so that test files running at the same time never share rows. */
export function tag(): string {
  return randomUUID().slice(0, 8)
}

export const TEST_PASSWORD = 'correct-horse-battery'
let hashed: Promise<string> | undefined
function testHash() {
  hashed ??= hashPassword(TEST_PASSWORD)
  return hashed
}

export interface TestFacility {
  facilityId: number
  theatreId: number
  locationId: number
  tag: string
  users: Record<Role, { id: number; email: string; name: string }>
}

/** A facility of its own with one theatre, one stock location and one active user per role. */
export async function makeFacility(db = testDb(), opts: { timeZone?: string } = {}): Promise<TestFacility> {
  const t = tag()
  const f = await db.insertInto('facilities').values({ code: `F-${t}`, name: `Test facility ${t}`, time_zone: opts.timeZone ?? 'UTC' })
    .returning('id').executeTakeFirstOrThrow()
  const th = await db.insertInto('theatres').values({ facility_id: f.id, code: 'T1', name: 'Theatre 1' }).returning('id').executeTakeFirstOrThrow()
  const loc = await db.insertInto('stock_locations').values({ facility_id: f.id, code: 'CORE', name: 'Core store' }).returning('id').executeTakeFirstOrThrow()
  await db.insertInto('rule_profiles').values({ facility_id: f.id, version: 1, nail_clearance_mm: 1, distal_screw_rounding: 'up', tad_limit_mm: 25 }).execute()
  const users = {} as TestFacility['users']
  for (const role of ['circulator', 'scrub', 'surgeon', 'coordinator', 'admin'] as const) {
    const email = `${role}-${t}@test.isthmus.test`
    const name = `${role[0]!.toUpperCase()}${role.slice(1)} ${t}`
    const u = await db.insertInto('users')
      .values({ email, name, role, facility_id: f.id, password_hash: await testHash() })
      .returning('id').executeTakeFirstOrThrow()
    users[role] = { id: u.id, email, name }
  }
  return { facilityId: f.id, theatreId: th.id, locationId: loc.id, tag: t, users }
}

/** A new, migrated database (for tests that need a whole database to themselves). */
export async function freshDatabase(name: string): Promise<{ url: string; db: Kysely<Database>; drop: () => Promise<void> }> {
  const admin = createDb(TEST_DATABASE_URL)
  await sql`DROP DATABASE IF EXISTS ${sql.id(name)} WITH (FORCE)`.execute(admin)
  await sql`CREATE DATABASE ${sql.id(name)}`.execute(admin)
  const url = TEST_DATABASE_URL.replace(/\/[^/]+$/, `/${name}`)
  const db = createDb(url)
  const migrator = new Migrator({
    db,
    provider: new FolderMigrationProvider(),
    // branches merged in any order each bring their own migrations; each runs once, independent of the others
    allowUnorderedMigrations: true,
  })
  const { error } = await migrator.migrateToLatest()
  if (error) throw error
  return {
    url,
    db,
    drop: async () => {
      await db.destroy()
      await sql`DROP DATABASE IF EXISTS ${sql.id(name)} WITH (FORCE)`.execute(admin)
      await admin.destroy()
    },
  }
}
