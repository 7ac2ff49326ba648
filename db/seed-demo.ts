// The demo scenario, loaded only by `npm start`: one invented hospital, its theatres, one person per role
// (password isthmus-demo), the invented implant system on the shelf, and a few cases booked for today.
// Idempotent: a second run adds nothing (cases are keyed by day, so each new day gets its own).
import { sql, type Kysely } from 'kysely'
import { createHash } from 'node:crypto'
import { createDb } from './connection'
import { DEMO_MAKER, demoCatalog, demoOnHand } from './demo-catalog'
import { hashPassword } from './password'
import type { Database, Role } from './types'

export const DEMO_PASSWORD = 'isthmus-demo'
export const DEMO_FACILITY = { code: 'FGH', name: 'Ferncliff General Hospital (demo)', time_zone: 'America/New_York' }
export const DEMO_USERS: { role: Role; name: string; email: string }[] = [
  { role: 'circulator', name: 'Nora Quill', email: 'circulator@demo.isthmus.test' },
  { role: 'scrub', name: 'Tomás Reyes-Brandt', email: 'scrub@demo.isthmus.test' },
  { role: 'surgeon', name: 'Dr. Ingrid Sølvberg', email: 'surgeon@demo.isthmus.test' },
  { role: 'coordinator', name: 'Malik Osei-Hart', email: 'coordinator@demo.isthmus.test' },
  { role: 'admin', name: 'Priya Venn', email: 'admin@demo.isthmus.test' },
]
const THEATRES = [
  { code: 'T1', name: 'Theatre 1' },
  { code: 'T2', name: 'Theatre 2' },
  { code: 'T3', name: 'Theatre 3 (trauma)' },
]
const PATIENTS = [
  { mrn: 'D-100231', family_name: 'Åkesson-Dubois', given_name: 'Margit', birth_date: '1938-04-17', sex: 'female' as const },
  { mrn: 'D-100457', family_name: 'Hargreave', given_name: 'Edmund', birth_date: '1944-11-02', sex: 'male' as const },
  { mrn: 'D-100918', family_name: 'Nakagawa-Lowe', given_name: 'Émilie', birth_date: '1951-07-29', sex: 'female' as const },
  { mrn: 'D-101372', family_name: 'Ferreira Groß', given_name: 'Joaquim', birth_date: '1933-01-08', sex: 'male' as const },
]

/** A stable UUID from a text, so re-runs find the rows they made. */
function keyOf(text: string): string {
  const h = createHash('sha256').update(text).digest('hex')
  return `${h.slice(0, 8)}-${h.slice(8, 12)}-4${h.slice(13, 16)}-8${h.slice(17, 20)}-${h.slice(20, 32)}`
}

export async function seedDemo(db: Kysely<Database>): Promise<{ facilityId: number }> {
  return db.transaction().execute(async (trx) => {
    const facility = await trx.insertInto('facilities').values(DEMO_FACILITY)
      .onConflict((oc) => oc.column('code').doUpdateSet({ name: DEMO_FACILITY.name }))
      .returning(['id', 'time_zone']).executeTakeFirstOrThrow()

    for (const t of THEATRES) {
      await trx.insertInto('theatres').values({ facility_id: facility.id, ...t })
        .onConflict((oc) => oc.columns(['facility_id', 'code']).doNothing()).execute()
    }
    const theatres = await trx.selectFrom('theatres').select(['id', 'code']).where('facility_id', '=', facility.id).execute()

    const users: Record<string, number> = {}
    for (const u of DEMO_USERS) {
      const found = await trx.selectFrom('users').select('id').where(sql`lower(email)`, '=', u.email).executeTakeFirst()
      users[u.role] = found?.id ?? (await trx.insertInto('users')
        .values({ ...u, facility_id: facility.id, password_hash: await hashPassword(DEMO_PASSWORD) })
        .returning('id').executeTakeFirstOrThrow()).id
    }

    const profile = await trx.selectFrom('rule_profiles').select('id').where('facility_id', '=', facility.id).orderBy('version', 'desc').executeTakeFirst()
      ?? await trx.insertInto('rule_profiles').values({
        facility_id: facility.id, version: 1, nail_clearance_mm: 1.0, distal_screw_rounding: 'up', tad_limit_mm: 25, created_by: users.admin,
      }).returning('id').executeTakeFirstOrThrow()

    const maker = await trx.insertInto('makers').values(DEMO_MAKER)
      .onConflict((oc) => oc.column('name').doUpdateSet({ address: DEMO_MAKER.address }))
      .returning('id').executeTakeFirstOrThrow()

    const store = await trx.insertInto('stock_locations').values({ facility_id: facility.id, code: 'CORE', name: 'Core store' })
      .onConflict((oc) => oc.columns(['facility_id', 'code']).doUpdateSet({ name: 'Core store' }))
      .returning('id').executeTakeFirstOrThrow()
    const t3 = theatres.find((t) => t.code === 'T3')!
    await trx.insertInto('stock_locations').values({ facility_id: facility.id, code: 'T3-CART', name: 'Theatre 3 nail cart', theatre_id: t3.id })
      .onConflict((oc) => oc.columns(['facility_id', 'code']).doNothing()).execute()

    const catalog = demoCatalog()
    for (const [i, item] of catalog.entries()) {
      const row = await trx.insertInto('catalog_items').values({ ...item, maker_id: maker.id })
        .onConflict((oc) => oc.column('gtin').doUpdateSet({ description: item.description }))
        .returning('id').executeTakeFirstOrThrow()
      const lot = `FH${String(2600 + (i % 40)).padStart(4, '0')}${String.fromCharCode(65 + (i % 26))}`
      const expiry = demoExpiry(i)
      await trx.insertInto('stock_lines').values({ location_id: store.id, item_id: row.id, lot, expiry, on_hand: demoOnHand(item, i) })
        .onConflict((oc) => oc.expression(sql`location_id, item_id, coalesce(lot, '')`).doNothing()).execute()
    }

    for (const p of PATIENTS) {
      await trx.insertInto('patients').values({ facility_id: facility.id, ...p })
        .onConflict((oc) => oc.columns(['facility_id', 'mrn']).doNothing()).execute()
    }
    const patients = await trx.selectFrom('patients').select(['id', 'mrn']).where('facility_id', '=', facility.id).execute()
    const pid = (mrn: string) => patients.find((p) => p.mrn === mrn)!.id
    const tid = (code: string) => theatres.find((t) => t.code === code)!.id

    const today = (await sql<{ d: string }>`SELECT to_char((now() AT TIME ZONE ${facility.time_zone})::date, 'YYYY-MM-DD') AS d`.execute(trx)).rows[0]!.d
    const bookings = [
      { theatre: 'T3', time: '08:00', mrn: 'D-100231', procedure: 'long_nail' as const, side: 'left' as const },
      { theatre: 'T3', time: '11:30', mrn: 'D-100457', procedure: 'short_nail' as const, side: 'right' as const },
      { theatre: 'T1', time: '09:15', mrn: 'D-100918', procedure: 'short_nail' as const, side: 'left' as const },
    ]
    for (const b of bookings) {
      await trx.insertInto('cases').values({
        facility_id: facility.id, theatre_id: tid(b.theatre), patient_id: pid(b.mrn), procedure: b.procedure, side: b.side,
        surgeon_id: users.surgeon!, circulator_id: users.circulator!, scrub_id: users.scrub!, rule_profile_id: profile.id,
        scheduled_at: sql<Date>`(${`${today} ${b.time}`}::timestamp AT TIME ZONE ${facility.time_zone})` as never,
        client_key: keyOf(`demo-case/${today}/${b.theatre}/${b.time}`), created_by: users.circulator!,
      }).onConflict((oc) => oc.column('client_key').doNothing()).execute()
    }
    return { facilityId: facility.id }
  })
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const db = createDb()
  seedDemo(db)
    .then(async () => {
      console.log('[seed] demo scenario loaded')
      await db.destroy()
    })
    .catch(async (e) => {
      console.error('[seed] failed:', e)
      await db.destroy()
      process.exit(1)
    })
}

/**
 * Use-by dates relative to the day the demo is loaded, so the shelf never ages into "expired": most
 * packs two to four years out, and every 17th within the next 90 days so the Expiring view has something.
 */
export function demoExpiry(i: number, from: Date = new Date()): string {
  const d = new Date(Date.UTC(from.getUTCFullYear(), from.getUTCMonth(), from.getUTCDate()))
  if (i % 17 === 5) d.setUTCDate(d.getUTCDate() + 20 + (i % 70))
  else d.setUTCFullYear(d.getUTCFullYear() + 2 + (i % 3), i % 12, 28)
  return d.toISOString().slice(0, 10)
}
