import { execFileSync } from 'node:child_process'
import { createHash, randomUUID } from 'node:crypto'
import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { clientFrom, type Client, signInRoles } from '../helpers/http'
import { closeTestDb, makeFacility, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { standardShelf } from '../helpers/catalog'
import { confirm, createCase, gs1Scan, reading, scan } from '../helpers/cases'
import { startSmtp, toAddresses } from '../helpers/smtp'
import { decodeSymbolsOnPage } from '../helpers/barcodes'
import { parseUdi } from '../../shared/utils/udi'
import { deliverDue } from '../../server/utils/mail'
import nodemailer from 'nodemailer'

const baseURL = inject('baseURL')
let f: TestFacility
let shelf: Awaited<ReturnType<typeof standardShelf>>
const as: Record<string, Client> = {}
let n = 0

beforeAll(async () => {
  f = await makeFacility(undefined, { timeZone: 'America/New_York' })
  await testDb().updateTable('facilities').set({ records_inbox: `records-${f.tag}@example.test` }).where('id', '=', f.facilityId).execute()
  shelf = await standardShelf(f)
  await testDb().updateTable('stock_lines').set({ on_hand: 1000 }).where('id', 'in', shelf.rows.map((r) => r.stockLineId)).execute()
  Object.assign(as, await signInRoles(baseURL, f, TEST_PASSWORD))
})
afterAll(closeTestDb)

/** A case logged end to end: readings, confirmed sizes, nail + head element + distal screw + a wasted screw. */
async function loggedCase(over: Record<string, unknown> = {}) {
  const id = await createCase(as.circulator!, f, { patient: { mrn: `R-${f.tag}-${n++}`, familyName: 'Groß-Øvrebø', givenName: 'Zoë', birthDate: '1939-05-02', sex: 'female' }, ...over })
  await reading(as.circulator!, id, 'reamed_diameter', 12)
  await reading(as.circulator!, id, 'nail_length', 385)
  await reading(as.circulator!, id, 'native_angle', 128)
  await reading(as.circulator!, id, 'head_element_length', 92)
  await reading(as.circulator!, id, 'distal_depth', 39, 1)
  const s = (await as.circulator!.get(`/api/cases/${id}/sizing`)).body
  await confirm(as.surgeon!, id, 'nail', s.nail.ideal.id)
  await confirm(as.surgeon!, id, 'head_element', s.headElement.ideal.id)
  await confirm(as.surgeon!, id, 'distal_screw', s.distal[0].ideal.id, 1)
  const byId = (x: number) => shelf.rows.find((r) => r.id === x)!
  const sn = `S${randomUUID().slice(0, 8)}`.toUpperCase()
  const nail = await scan(as.scrub!, id, gs1Scan(byId(s.nail.ideal.id).gtin, { expiry: '2030-12-31', lot: 'NAIL-LOT-1', serial: sn }))
  await scan(as.scrub!, id, gs1Scan(byId(s.headElement.ideal.id).gtin, { expiry: '2030-12-31', lot: 'HE-LOT-2' }))
  await scan(as.scrub!, id, gs1Scan(byId(s.distal[0].ideal.id).gtin, { expiry: '2030-12-31', lot: 'DS-LOT-3' }))
  await scan(as.scrub!, id, gs1Scan(byId(s.distal[0].ideal.id).gtin, { expiry: '2030-12-31', lot: 'DS-LOT-4' }), { disposition: 'wasted', wasteReason: 'contaminated' })
  return { id, nailItemId: nail.body.item.id as number, serial: sn }
}

function pdftotext(bytes: Buffer): string {
  const dir = mkdtempSync(path.join(tmpdir(), 'isthmus-pdf-'))
  writeFileSync(path.join(dir, 'r.pdf'), bytes)
  return execFileSync('pdftotext', ['-layout', path.join(dir, 'r.pdf'), '-'], { encoding: 'utf8' })
}
/** The pages of a PDF as PNGs, rendered by poppler's pdftoppm. */
function pdfPages(bytes: Buffer, dpi: number): Buffer[] {
  const dir = mkdtempSync(path.join(tmpdir(), 'isthmus-png-'))
  writeFileSync(path.join(dir, 'r.pdf'), bytes)
  execFileSync('pdftoppm', ['-r', String(dpi), '-png', path.join(dir, 'r.pdf'), path.join(dir, 'p')])
  return readdirSync(dir).filter((n) => n.endsWith('.png')).sort().map((n) => readFileSync(path.join(dir, n)))
}
async function pdf(c: Client, url: string) {
  const r = await fetch(baseURL + url, { headers: { cookie: c.cookieHeader() } })
  return { status: r.status, headers: r.headers, bytes: Buffer.from(await r.arrayBuffer()) }
}

describe('closing the case', () => {
  it('refuses to close while checks are open, listing each in plain words', async () => {
    const { id, nailItemId } = await loggedCase()
    const review = (await as.circulator!.get(`/api/cases/${id}/review`)).body
    expect(review.problems.join(' ')).toMatch(/not acknowledged/)
    const r = await as.circulator!.post(`/api/cases/${id}/close`)
    expect(r.status).toBe(409)
    expect(r.body.data.problems.length).toBeGreaterThan(0)
    await as.circulator!.post(`/api/cases/${id}/items/${nailItemId}/acknowledge`, {})
    expect((await as.circulator!.get(`/api/cases/${id}/review`)).body.problems).toEqual([])
    expect((await as.circulator!.post(`/api/cases/${id}/close`)).status).toBe(200)
    // the surgeon's signing request waits in the outbox with a link to the record
    const mail = await testDb().selectFrom('outbox').selectAll().where('ref', '=', `case:${id}`).where('kind', '=', 'signing_request').executeTakeFirstOrThrow()
    expect(mail.to_address).toBe(f.users.surgeon.email)
    expect(mail.body_text).toContain(`/cases/${id}/record`)
  })
})

describe('signing', () => {
  async function closedCase() {
    const c = await loggedCase()
    await as.circulator!.post(`/api/cases/${c.id}/items/${c.nailItemId}/acknowledge`, {})
    const r = await as.circulator!.post(`/api/cases/${c.id}/close`)
    if (r.status !== 200) throw new Error(JSON.stringify(r.body))
    return c
  }

  it('a wrong password is refused; only the case’s surgeon may sign', async () => {
    const { id } = await closedCase()
    const wrong = await as.surgeon!.post(`/api/cases/${id}/sign`, { password: 'not-my-password' })
    expect(wrong.status).toBe(400)
    expect(wrong.body.data.fields.password).toBe('The password is not right.')
    expect((await as.circulator!.post(`/api/cases/${id}/sign`, { password: TEST_PASSWORD })).status).toBe(403)
    // another surgeon of the same facility is not this case's surgeon
    const other = await testDb().insertInto('users').values({ email: `surgeon2-${f.tag}@test.isthmus.test`, name: 'Other Surgeon', role: 'surgeon', facility_id: f.facilityId, password_hash: (await testDb().selectFrom('users').select('password_hash').where('id', '=', f.users.surgeon.id).executeTakeFirstOrThrow()).password_hash }).returning('email').executeTakeFirstOrThrow()
    const c2 = clientFrom(baseURL)
    await c2.login(other.email, TEST_PASSWORD)
    const r = await c2.post(`/api/cases/${id}/sign`, { password: TEST_PASSWORD })
    expect(r.status).toBe(403)
    expect(r.body.message).toMatch(/Only the surgeon of this case/)
  })

  it('signs: the PDF is stored and served byte for byte with its hash; the case is locked at the database', async () => {
    const { id, serial } = await closedCase()
    const s = await as.surgeon!.post(`/api/cases/${id}/sign`, { password: TEST_PASSWORD })
    expect(s.status).toBe(200)
    expect(s.body.recordHash).toMatch(/^[0-9a-f]{64}$/)
    const a = await pdf(as.coordinator!, `/api/cases/${id}/record.pdf`)
    const b = await pdf(as.circulator!, `/api/cases/${id}/record.pdf?version=1`)
    expect(a.status).toBe(200)
    expect(a.headers.get('content-type')).toBe('application/pdf')
    expect(Buffer.compare(a.bytes, b.bytes)).toBe(0)
    const sha = createHash('sha256').update(a.bytes).digest('hex')
    expect(sha).toBe(s.body.pdfHash)
    expect(a.headers.get('x-record-sha256')).toBe(sha)
    const text = pdftotext(a.bytes)
    expect(text).toContain('Groß-Øvrebø')
    expect(text).toContain(serial)
    for (const lot of ['NAIL-LOT-1', 'HE-LOT-2', 'DS-LOT-3', 'DS-LOT-4']) expect(text).toContain(lot)
    expect(text).toContain(s.body.recordHash)
    expect(text).not.toMatch(/DRAFT/)
    // the chart copy can be scanned again: every implant's DataMatrix on the served pages decodes to its UDI
    const symbols = pdfPages(a.bytes, 150).flatMap((png) => decodeSymbolsOnPage(png, 'datamatrix'))
    expect(symbols).not.toContain(null)
    const read = symbols.map((t) => parseUdi(t!, { today: '2026-12-01' })).filter((p) => p.ok)
    expect(read).toHaveLength(symbols.length)
    // one per implant; the wasted screw (DS-LOT-4) is in the waste table, not printed to be scanned
    expect(read.map((p) => p.ok && p.lot).sort()).toEqual(['DS-LOT-3', 'HE-LOT-2', 'NAIL-LOT-1'])
    expect(read.some((p) => p.ok && p.serial === serial)).toBe(true)

    // the API answers 409 to every change
    expect((await reading(as.circulator!, id, 'nail_length', 360)).status).toBe(409)
    expect((await scan(as.scrub!, id, gs1Scan(shelf.rows[0]!.gtin, { expiry: '2030-12-31', lot: 'LATE' }))).status).toBe(409)
    const items = (await as.circulator!.get(`/api/cases/${id}/items`)).body.items
    expect((await as.circulator!.patch(`/api/cases/${id}/items/${items[0].id}`, { disposition: 'wasted', wasteReason: 'plan_changed' })).status).toBe(409)
    expect((await as.circulator!.post(`/api/cases/${id}/reopen`)).status).toBe(409)
    // and the database itself refuses, whatever code path tries
    await expect(testDb().updateTable('case_items').set({ lot: 'TAMPERED' }).where('case_id', '=', id).execute()).rejects.toThrow(/signed/)
    await expect(testDb().deleteFrom('case_items').where('case_id', '=', id).execute()).rejects.toThrow(/signed/)
    await expect(testDb().updateTable('cases').set({ status: 'open' }).where('id', '=', id).execute()).rejects.toThrow(/signed/)
    await expect(testDb().updateTable('record_versions').set({ attestation: 'x' }).where('case_id', '=', id).execute()).rejects.toThrow(/cannot change/)
    await expect(testDb().insertInto('readings').values({ case_id: id, kind: 'nail_length', value: 1, unit: 'mm', entered_by: f.users.circulator.id }).execute()).rejects.toThrow(/signed/)

    // the signed PDF waits in the outbox for the records inbox, as an attachment
    const mail = await testDb().selectFrom('outbox').selectAll().where('ref', '=', `case:${id}`).where('kind', '=', 'signed_record').executeTakeFirstOrThrow()
    expect(mail.to_address).toBe(`records-${f.tag}@example.test`)
    const att = (mail.attachments as { filename: string; contentBase64: string }[])[0]!
    expect(Buffer.from(att.contentBase64, 'base64').equals(a.bytes)).toBe(true)
  })

  it('e-mail: the signing request reaches the surgeon and the signed PDF the records inbox, through a real SMTP server', async () => {
    // RFC 5321 delivery to a local capturing server standing in for the hospital's mail relay
    const smtp = await startSmtp()
    try {
      const transport = nodemailer.createTransport({ host: '127.0.0.1', port: smtp.port, secure: false, ignoreTLS: true })
      const { id } = await closedCase()
      expect(await deliverDue(testDb(), transport, { ref: `case:${id}` })).toMatchObject({ sent: 1, failed: 0 })
      const request = smtp.messages.at(-1)!
      expect(toAddresses(request)).toEqual([f.users.surgeon.email])
      expect(request.subject).toMatch(/sign/i)
      expect(request.text).toContain(`/cases/${id}/record`)

      expect((await as.surgeon!.post(`/api/cases/${id}/sign`, { password: TEST_PASSWORD })).status).toBe(200)
      expect(await deliverDue(testDb(), transport, { ref: `case:${id}` })).toMatchObject({ sent: 1, failed: 0 })
      const filed = smtp.messages.at(-1)!
      expect(toAddresses(filed)).toEqual([`records-${f.tag}@example.test`])
      expect(filed.attachments).toHaveLength(1)
      const att = filed.attachments[0]!
      expect(att.contentType).toBe('application/pdf')
      expect(att.filename).toMatch(/\.pdf$/)
      const served = await pdf(as.surgeon!, `/api/cases/${id}/record.pdf`)
      expect(Buffer.compare(att.content, served.bytes)).toBe(0)
      // delivered once each: nothing of this case is left to send
      expect(await deliverDue(testDb(), transport, { ref: `case:${id}` })).toMatchObject({ sent: 0 })
      expect(smtp.messages.filter((m) => m.text?.includes(`/cases/${id}/record`) || toAddresses(m).includes(`records-${f.tag}@example.test`))).toHaveLength(2)
    } finally {
      await smtp.stop()
    }
  })

  it('an addendum is a new signed version; version 1 stays byte-identical', async () => {
    const { id } = await closedCase()
    await as.surgeon!.post(`/api/cases/${id}/sign`, { password: TEST_PASSWORD })
    const v1 = await pdf(as.surgeon!, `/api/cases/${id}/record.pdf?version=1`)
    expect((await as.circulator!.post(`/api/cases/${id}/addenda`, { reason: 'Lot misread', correction: 'Nail lot is NAIL-LOT-1A', password: TEST_PASSWORD })).status).toBe(403)
    const noReason = await as.surgeon!.post(`/api/cases/${id}/addenda`, { reason: '', correction: 'x', password: TEST_PASSWORD })
    expect(noReason.status).toBe(400)
    const ad = await as.surgeon!.post(`/api/cases/${id}/addenda`, { reason: 'Head element lot misread', correction: 'Head element lot is HE-LOT-2B', password: TEST_PASSWORD })
    expect(ad.status).toBe(201)
    expect(ad.body.version).toBe(2)
    const v1again = await pdf(as.surgeon!, `/api/cases/${id}/record.pdf?version=1`)
    expect(Buffer.compare(v1.bytes, v1again.bytes)).toBe(0)
    const v2 = await pdf(as.surgeon!, `/api/cases/${id}/record.pdf`)
    expect(pdftotext(v2.bytes)).toContain('HE-LOT-2B')
    const rec = (await as.coordinator!.get(`/api/cases/${id}/record`)).body
    expect(rec.versions.map((v: any) => v.version)).toEqual([1, 2])
    const rows = await testDb().selectFrom('record_versions').select(['version', 'previous_id', 'record']).where('case_id', '=', id).orderBy('version').execute()
    expect((rows[1]!.record as any).previousVersionHash).toBe(rec.versions[0].recordHash)
  })

  it('SQL- and script-looking names print as plain text in the PDF', async () => {
    const { id } = await loggedCase({ patient: { mrn: `X-${f.tag}-${n++}`, familyName: "Robert'); DROP TABLE patients;--", givenName: '<script>alert(1)</script>', birthDate: '1940-02-02', sex: 'male' } })
    const text = pdftotext((await pdf(as.circulator!, `/api/cases/${id}/record.pdf`)).bytes)
    expect(text).toContain("Robert'); DROP TABLE patients;--")
    expect(text).toContain('<script>alert(1)</script>')
    expect(await testDb().selectFrom('patients').select('id').limit(1).execute()).toHaveLength(1)
  })

  it('before signing the PDF is a draft, watermarked', async () => {
    const { id } = await loggedCase()
    const d = await pdf(as.circulator!, `/api/cases/${id}/record.pdf`)
    expect(d.status).toBe(200)
    expect(pdftotext(d.bytes)).toMatch(/DRAFT/)
  })

  it('the implant card is for the nail only (EU MDR Art. 18(3) exempts screws), sized for a wallet', async () => {
    const { id, nailItemId } = await loggedCase()
    const card = await pdf(as.circulator!, `/api/cases/${id}/card.pdf?item=${nailItemId}`)
    expect(card.status).toBe(200)
    const text = pdftotext(card.bytes)
    expect(text).toContain('NAIL-LOT-1')
    expect(text).toContain('Groß-Øvrebø')
    const items = (await as.circulator!.get(`/api/cases/${id}/items`)).body.items
    const screw = items.find((i: any) => i.kind === 'head_element')
    expect((await pdf(as.circulator!, `/api/cases/${id}/card.pdf?item=${screw.id}`)).status).toBe(409)
  })

  it('people outside the case team cannot read its record; the coordinator can', async () => {
    const { id } = await loggedCase()
    const outsider = await testDb().insertInto('users').values({ email: `scrub2-${f.tag}-${n++}@test.isthmus.test`, name: 'Another Scrub', role: 'scrub', facility_id: f.facilityId, password_hash: (await testDb().selectFrom('users').select('password_hash').where('id', '=', f.users.scrub.id).executeTakeFirstOrThrow()).password_hash }).returning('email').executeTakeFirstOrThrow()
    const c = clientFrom(baseURL)
    await c.login(outsider.email, TEST_PASSWORD)
    expect((await pdf(c, `/api/cases/${id}/record.pdf`)).status).toBe(404)
    expect((await pdf(as.coordinator!, `/api/cases/${id}/record.pdf`)).status).toBe(200)
  })
})
