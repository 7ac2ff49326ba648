// A backup is only as good as its restore: dump a database with scripts/backup.sh, restore it with
// scripts/restore.sh into another new database, and compare them table by table, down to the bytes of
// a signed record's PDF.
import { createHash, randomBytes, randomUUID } from 'node:crypto'
import { execFile } from 'node:child_process'
import { existsSync, mkdtempSync, rmSync, statSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { promisify } from 'node:util'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { sql, type Kysely } from 'kysely'
import { createDb } from '../../db/connection'
import { seedDemo } from '../../db/seed-demo'
import type { Database } from '../../db/types'
import { freshDatabase, makeFacility } from '../helpers/db'
import { TEST_DATABASE_URL } from '../helpers/env'

const run = promisify(execFile)
const root = path.resolve(import.meta.dirname, '../..')
const suffix = `${process.pid}_${randomBytes(3).toString('hex')}`
const TARGET = `isthmus_restored_${suffix}`
const targetUrl = TEST_DATABASE_URL.replace(/\/[^/]+$/, `/${TARGET}`)
const dir = mkdtempSync(path.join(tmpdir(), 'isthmus-backup-'))
const dump = path.join(dir, 'isthmus.dump')
const pdf = randomBytes(48_000) // any bytes stand in for the PDF; what matters is that they come back unchanged

let source: Awaited<ReturnType<typeof freshDatabase>>
let restored: Kysely<Database> | undefined
let caseId: number

function script(name: string, args: string[], env: Record<string, string> = {}) {
  return run('bash', [path.join(root, 'scripts', name), ...args], { env: { ...process.env, DATABASE_URL: source.url, ...env } })
}

/** Every table of the public schema (the migrations' own bookkeeping included) with its row count. */
async function rowCounts(db: Kysely<Database>): Promise<Record<string, number>> {
  const tables = await sql<{ name: string }>`SELECT table_name AS name FROM information_schema.tables
    WHERE table_schema = 'public' AND table_type = 'BASE TABLE' ORDER BY table_name`.execute(db)
  const out: Record<string, number> = {}
  for (const { name } of tables.rows) {
    out[name] = Number((await sql<{ n: number }>`SELECT count(*)::int AS n FROM ${sql.table(name)}`.execute(db)).rows[0]!.n)
  }
  return out
}

async function signedVersions(db: Kysely<Database>) {
  return (await sql<{ case_id: number; version: number; pdf_hash: string; pdf_sha256: string; record_hash: string }>`
    SELECT case_id, version, pdf_hash, encode(sha256(pdf), 'hex') AS pdf_sha256, record_hash
    FROM record_versions ORDER BY id`.execute(db)).rows
}

beforeAll(async () => {
  source = await freshDatabase(`isthmus_backup_${suffix}`)
  const db = source.db
  await seedDemo(db) // facilities, people, catalog, shelf, patients and cases
  const f = await makeFacility(db)

  // a case of our own, signed: a reading, then the signed version with its PDF, then the lock
  const patient = await db.insertInto('patients').values({
    facility_id: f.facilityId, mrn: `B-${suffix}`, family_name: 'Backupperson', given_name: 'Sam', birth_date: '1944-06-01', sex: 'unknown',
  }).returning('id').executeTakeFirstOrThrow()
  const c = await db.insertInto('cases').values({
    facility_id: f.facilityId, theatre_id: f.theatreId, patient_id: patient.id, procedure: 'long_nail', side: 'right',
    surgeon_id: f.users.surgeon.id, scheduled_at: new Date(), status: 'closed', client_key: randomUUID(), created_by: f.users.circulator.id,
  } as never).returning('id').executeTakeFirstOrThrow()
  caseId = c.id
  await db.insertInto('readings').values({
    case_id: caseId, kind: 'reamed_diameter', slot: 0, value: '12.50', unit: 'mm', client_key: randomUUID(), entered_by: f.users.circulator.id,
  } as never).execute()
  const record = { caseId, patient: { mrn: `B-${suffix}` }, implants: [] }
  await db.insertInto('record_versions').values({
    case_id: caseId, version: 1, record: JSON.stringify(record), record_hash: createHash('sha256').update(JSON.stringify(record)).digest('hex'),
    pdf, pdf_hash: createHash('sha256').update(pdf).digest('hex'), attestation: 'Test attestation',
    signed_by: f.users.surgeon.id, signed_at: new Date(),
  } as never).execute()
  await db.updateTable('cases').set({ status: 'signed' }).where('id', '=', caseId).execute()
  await db.insertInto('audit_log').values({ actor_id: f.users.surgeon.id, action: 'record.sign', entity: 'case', entity_id: String(caseId) } as never).execute()
}, 120_000)

afterAll(async () => {
  await restored?.destroy()
  if (source) {
    await sql`DROP DATABASE IF EXISTS ${sql.id(TARGET)} WITH (FORCE)`.execute(source.db)
    await source.drop()
  }
  rmSync(dir, { recursive: true, force: true })
})

describe('backup and restore', () => {
  it('backs up to one file that only its owner can read', async () => {
    const { stdout } = await script('backup.sh', [dump])
    expect(stdout.trim()).toBe(dump)
    expect(existsSync(dump)).toBe(true)
    expect(existsSync(`${dump}.partial`)).toBe(false)
    expect(statSync(dump).mode & 0o077).toBe(0)
    expect(statSync(dump).size).toBeGreaterThan(pdf.length / 2)
  }, 60_000)

  it('restores into a new database with every table and every row', async () => {
    await script('restore.sh', [dump, TARGET])
    restored = createDb(targetUrl)
    const before = await rowCounts(source.db)
    const after = await rowCounts(restored)
    // the comparison means something only if the source has rows where it matters
    for (const t of ['facilities', 'users', 'catalog_items', 'stock_lines', 'patients', 'cases', 'readings', 'record_versions', 'audit_log']) {
      expect(before[t], t).toBeGreaterThan(0)
    }
    expect(Object.keys(after)).toEqual(Object.keys(before))
    expect(after).toEqual(before)
  }, 60_000)

  it('gives back the signed PDF byte for byte: stored hash and recomputed hash agree on both sides', async () => {
    const a = await signedVersions(source.db)
    const b = await signedVersions(restored!)
    expect(a).toHaveLength(1)
    expect(a[0]!.pdf_sha256).toBe(a[0]!.pdf_hash)
    expect(b).toEqual(a)
    const row = await restored!.selectFrom('record_versions').select('pdf').where('case_id', '=', caseId).executeTakeFirstOrThrow()
    expect(Buffer.from(row.pdf).equals(pdf)).toBe(true)
  })

  it('restores the rules too: the signed record stays locked and new rows get new ids', async () => {
    const change = restored!.updateTable('record_versions').set({ attestation: 'changed' } as never).where('case_id', '=', caseId).execute()
    await expect(change).rejects.toThrow(/signed record cannot change/)
    const maxBefore = Number((await sql<{ n: number }>`SELECT max(id)::int AS n FROM facilities`.execute(restored!)).rows[0]!.n)
    const added = await restored!.insertInto('facilities').values({ code: `R-${suffix}`, name: 'Restored facility', time_zone: 'UTC' } as never)
      .returning('id').executeTakeFirstOrThrow()
    expect(added.id).toBeGreaterThan(maxBefore)
  })

  it('never restores over a database that exists, unless told to replace it', async () => {
    await expect(script('restore.sh', [dump, TARGET])).rejects.toMatchObject({ code: 1, stderr: expect.stringMatching(/already exists/) })
    // the existing one is untouched: the facility added above is still there
    const kept = await restored!.selectFrom('facilities').select('id').where('code', '=', `R-${suffix}`).execute()
    expect(kept).toHaveLength(1)
  })

  it('with --replace, drops the existing database and restores the backup as it was', async () => {
    await restored!.destroy() // the drop ends every connection to it
    await script('restore.sh', [dump, TARGET, '--replace'])
    restored = createDb(targetUrl)
    expect(await restored.selectFrom('facilities').select('id').where('code', '=', `R-${suffix}`).execute()).toHaveLength(0)
    expect(await rowCounts(restored)).toEqual(await rowCounts(source.db))
  }, 60_000)

  it('a file that is not a backup fails loudly and leaves no database behind', async () => {
    const junk = path.join(dir, 'junk.dump')
    await run('bash', ['-c', `printf 'not a backup' > "${junk}"`])
    const name = `isthmus_junk_${suffix}`
    await expect(script('restore.sh', [junk, name])).rejects.toMatchObject({ code: 1 })
    const left = await sql<{ n: number }>`SELECT count(*)::int AS n FROM pg_database WHERE datname = ${name}`.execute(source.db)
    expect(left.rows[0]!.n).toBe(0)
  })
})
