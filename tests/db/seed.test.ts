import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { sql, type Kysely } from 'kysely'
import { demoExpiry, seedDemo, DEMO_USERS, DEMO_PASSWORD } from '../../db/seed-demo'
import { verifyPassword } from '../../db/password'
import type { Database } from '../../db/types'
import { freshDatabase } from '../helpers/db'

let fresh: Awaited<ReturnType<typeof freshDatabase>>
let db: Kysely<Database>

beforeAll(async () => {
  fresh = await freshDatabase(`isthmus_seed_${process.pid}`)
  db = fresh.db
})
afterAll(async () => { await fresh?.drop() })

async function counts() {
  const tables = ['facilities', 'theatres', 'users', 'rule_profiles', 'makers', 'catalog_items', 'stock_locations', 'stock_lines', 'patients', 'cases'] as const
  const out: Record<string, number> = {}
  for (const t of tables) out[t] = Number((await sql<{ n: number }>`SELECT count(*)::int AS n FROM ${sql.table(t)}`.execute(db)).rows[0]!.n)
  return out
}

describe('demo scenario', () => {
  it('loads once, and a second run adds nothing', async () => {
    await seedDemo(db)
    const first = await counts()
    expect(first.users).toBe(5)
    expect(first.catalog_items).toBeGreaterThan(200)
    expect(first.cases).toBe(3)
    await seedDemo(db)
    expect(await counts()).toEqual(first)
  })

  it('has one person per role with the demo password, and GTINs on the demo prefix 952', async () => {
    const users = await db.selectFrom('users').select(['email', 'role', 'password_hash']).execute()
    expect(users.map((u) => u.role).sort()).toEqual(DEMO_USERS.map((u) => u.role).sort())
    for (const u of users) expect(await verifyPassword(u.password_hash, DEMO_PASSWORD)).toBe(true)
    const gtins = await db.selectFrom('catalog_items').select('gtin').execute()
    // GS1 prefix 952: "used for demonstrations and examples of the GS1 system" (standards.md A1.8)
    expect(gtins.every((g) => g.gtin!.startsWith('0952'))).toBe(true)
  })

  it('stocks the shelf with packs in date whenever it is loaded, a few expiring within 90 days', async () => {
    const rows = await sql<{ expired: number; soon: number; later: number }>`
      SELECT count(*) FILTER (WHERE expiry < current_date)::int AS expired,
             count(*) FILTER (WHERE expiry BETWEEN current_date AND current_date + 90)::int AS soon,
             count(*) FILTER (WHERE expiry > current_date + 365)::int AS later
      FROM stock_lines`.execute(db)
    const r = rows.rows[0]!
    expect(r.expired).toBe(0)
    expect(r.soon).toBeGreaterThan(5)
    expect(r.later).toBeGreaterThan(150)
  })

  it('dates the packs from the day it is loaded, not from a fixed year', () => {
    expect(demoExpiry(0, new Date('2031-03-10T12:00:00Z'))).toBe('2033-01-28')
    expect(demoExpiry(5, new Date('2031-03-10T12:00:00Z'))).toBe('2031-04-04') // 20 + 5 days on
    expect(demoExpiry(1, new Date('2040-12-31T12:00:00Z'))).toBe('2043-02-28')
  })
})
