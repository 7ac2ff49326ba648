import { randomUUID } from 'node:crypto'
import { sql } from 'kysely'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { Client, signInRoles } from '../helpers/http'
import { closeTestDb, makeFacility, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { addItems, randomGtin, standardShelf } from '../helpers/catalog'
import { confirm, createCase, gs1Scan, reading, scan } from '../helpers/cases'
import { scanLabel } from '../helpers/barcodes'

const baseURL = inject('baseURL')
let f: TestFacility
let shelf: Awaited<ReturnType<typeof standardShelf>>
const as: Record<string, Client> = {}
let serialN = 0
const serial = () => `SN${Date.now().toString(36)}${serialN++}`.toUpperCase()

beforeAll(async () => {
  f = await makeFacility()
  shelf = await standardShelf(f)
  // many packs of the sizes this file scans again and again
  await testDb().updateTable('stock_lines').set({ on_hand: 1000 }).where('id', 'in', shelf.rows.map((r) => r.stockLineId)).execute()
  Object.assign(as, await signInRoles(baseURL, f, TEST_PASSWORD))
})
afterAll(closeTestDb)

/** A case with the nail 11 × 380 130° left, head element 90 and distal screw 40 confirmed. */
async function readyCase() {
  const id = await createCase(as.circulator!, f)
  await reading(as.circulator!, id, 'reamed_diameter', 12)
  await reading(as.circulator!, id, 'nail_length', 385)
  await reading(as.circulator!, id, 'native_angle', 128)
  await reading(as.circulator!, id, 'head_element_length', 92)
  await reading(as.circulator!, id, 'distal_depth', 39, 1)
  const s = (await as.circulator!.get(`/api/cases/${id}/sizing`)).body
  await confirm(as.surgeon!, id, 'nail', s.nail.ideal.id)
  await confirm(as.surgeon!, id, 'head_element', s.headElement.ideal.id)
  await confirm(as.surgeon!, id, 'distal_screw', s.distal[0].ideal.id, 1)
  return { id, sizing: s }
}
const item = (pred: (s: any) => boolean) => shelf.rows.find((r) => pred(r.spec))!
const onHand = async (stockLineId: number) => (await testDb().selectFrom('stock_lines').select('on_hand').where('id', '=', stockLineId).executeTakeFirstOrThrow()).on_hand

describe('scanning packs into the log', () => {
  it('a head element of the confirmed size is accepted, logged with its UDI, and takes one off the shelf', async () => {
    const { id } = await readyCase()
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const before = await onHand(he.stockLineId)
    const sn = serial()
    const r = await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: sn }))
    expect(r.status).toBe(201)
    expect(r.body).toMatchObject({ result: 'accepted', item: { lot: `L${he.id}`, serial: sn, expiry: '2030-12-31', disposition: 'implanted' } })
    expect(await onHand(he.stockLineId)).toBe(before - 1)
    const list = (await as.circulator!.get(`/api/cases/${id}/items`)).body
    expect(list.items).toHaveLength(1)
    expect(list.items[0]).toMatchObject({ di: he.gtin, lot: `L${he.id}`, serial: sn, source: 'wedge', recordedBy: f.users.scrub.name, needsAck: false })
    expect(list.totals).toMatchObject({ implanted: 1, wasted: 0 })
  })

  it('a nail asks for the aiming-guide acknowledgement; acknowledging it is recorded', async () => {
    const { id, sizing } = await readyCase()
    const nail = shelf.rows.find((r) => r.id === sizing.nail.ideal.id)!
    const r = await scan(as.scrub!, id, gs1Scan(nail.gtin, { expiry: '2030-12-31', lot: `L${nail.id}`, serial: serial() }))
    expect(r.status).toBe(201)
    expect(r.body.result).toBe('check')
    expect(r.body.checks.map((c: any) => c.code)).toEqual(['aiming_guide'])
    expect(r.body.message).toMatch(/aiming guide to 130° and left/)
    const ack = await as.circulator!.post(`/api/cases/${id}/items/${r.body.item.id}/acknowledge`, {})
    expect(ack.status).toBe(200)
    const list = (await as.circulator!.get(`/api/cases/${id}/items`)).body
    expect(list.items[0]).toMatchObject({ needsAck: false, acknowledgedBy: f.users.circulator.name })
  })

  // the implant's instructions for use: never implant expired product
  it('an expired pack is refused with a message that says what to do, and nothing is logged or taken off the shelf', async () => {
    const { id } = await readyCase()
    const [old] = await addItems(f, [{ kind: 'head_element', d: 10.5, len: 90, lot: 'OLD1', expiry: '2020-01-31' }])
    const before = await onHand(old!.stockLineId)
    const key = randomUUID()
    const r = await as.scrub!.post(`/api/cases/${id}/items`, { scan: gs1Scan(old!.gtin, { expiry: '2020-01-31', lot: 'OLD1' }), source: 'wedge', clientKey: key })
    expect(r.status).toBe(422)
    expect(r.body).toMatchObject({ result: 'refused', code: 'expired', message: 'Expired 2020-01-31 — do not open. Fetch another pack.' })
    expect((await as.circulator!.get(`/api/cases/${id}/items`)).body.items).toHaveLength(0)
    expect(await onHand(old!.stockLineId)).toBe(before)
    // the refused attempt is kept, not dropped
    const ev = await testDb().selectFrom('scan_events').selectAll().where('client_key', '=', key).executeTakeFirstOrThrow()
    expect(ev).toMatchObject({ result: 'refused', code: 'expired', status_code: 422 })
  })

  it('a pack whose expiry is the day of surgery is still good (use by the end of that day)', async () => {
    const { id } = await readyCase()
    const today = new Date().toISOString().slice(0, 10)
    const [pack] = await addItems(f, [{ kind: 'set_screw', lot: 'TODAY', expiry: today }])
    const r = await scan(as.scrub!, id, gs1Scan(pack!.gtin, { expiry: today, lot: 'TODAY' }))
    expect(r.status).toBe(201)
  })

  it('a lot under an open recall is refused; a closed recall no longer stops it', async () => {
    const { id } = await readyCase()
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const rec = await testDb().insertInto('recalls').values({ title: 'Test notice', notice_ref: 'N-1', fda_class: 'II' }).returning('id').executeTakeFirstOrThrow()
    await testDb().insertInto('recall_items').values({ recall_id: rec.id, di: he.gtin, lot: 'BADLOT' }).execute()
    const r = await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: 'BADLOT', serial: serial() }))
    expect(r.status).toBe(422)
    expect(r.body).toMatchObject({ result: 'refused', code: 'recalled' })
    expect(r.body.message).toMatch(/Under recall \(Test notice, N-1\)/)
    // another lot of the same item is not affected
    expect((await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: 'GOODLOT', serial: serial() }))).status).toBe(201)
    await testDb().updateTable('recalls').set({ status: 'closed' }).where('id', '=', rec.id).execute()
    expect((await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: 'BADLOT', serial: serial() }))).status).toBe(201)
  })

  it('a recall naming serials refuses those units only, whatever their lot', async () => {
    // 21 CFR 801.3: a serial identifies one unit, so a notice may name units rather than lots
    const { id } = await readyCase()
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const bad = serial()
    const rec = await testDb().insertInto('recalls').values({ title: 'Unit notice', notice_ref: 'N-2', fda_class: 'I' }).returning('id').executeTakeFirstOrThrow()
    await testDb().insertInto('recall_items').values({ recall_id: rec.id, di: he.gtin, serial: bad }).execute()
    const r = await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: bad }))
    expect(r.status).toBe(422)
    expect(r.body).toMatchObject({ result: 'refused', code: 'recalled' })
    expect((await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: serial() }))).status).toBe(201)
  })

  it('the same serial already implanted in anyone is refused with 409', async () => {
    const a = await readyCase()
    const b = await readyCase()
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const sn = serial()
    expect((await scan(as.scrub!, a.id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: sn }))).status).toBe(201)
    const again = await scan(as.scrub!, b.id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: sn }))
    expect(again.status).toBe(409)
    expect(again.body).toMatchObject({ result: 'refused', code: 'duplicate_serial' })
    expect(again.body.message).toMatch(/another patient/)
  })

  it('a size different from the confirmed one is a check that must be acknowledged, and says both sizes', async () => {
    const { id } = await readyCase()
    const he = item((s) => s.kind === 'head_element' && s.len === 100)
    const r = await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: serial() }))
    expect(r.status).toBe(201)
    expect(r.body).toMatchObject({ result: 'check', code: 'size_differs' })
    expect(r.body.message).toBe('Size 100 mm differs from the confirmed 90 mm. Check with the surgeon.')
    expect((await as.circulator!.get(`/api/cases/${id}/items`)).body.totals.toAcknowledge).toBe(1)
  })

  it.each([
    ['diameter', { d: 10, angle: 130 }, '10 × 380 mm, 130°, left'],
    ['angle', { d: 11, angle: 125 }, '11 × 380 mm, 125°, left'],
  ])('a nail differing only in %s is a check that must be acknowledged', async (_what, p, named) => {
    // common practice: every dimension on the pack is compared with the confirmed size, not only the length
    const { id } = await readyCase()
    const nail = item((s) => s.kind === 'nail' && s.side === 'left' && s.len === 380 && s.d === p.d && s.angle === p.angle)
    const r = await scan(as.scrub!, id, gs1Scan(nail.gtin, { expiry: '2030-12-31', lot: `L${nail.id}`, serial: serial() }))
    expect(r.status).toBe(201)
    expect(r.body.checks.map((c: any) => c.code)).toContain('size_differs')
    expect(r.body.checks.find((c: any) => c.code === 'size_differs').message)
      .toBe(`Size ${named} differs from the confirmed 11 × 380 mm, 130°, left. Check with the surgeon.`)
  })

  it('a wrong-side nail is a check naming both sides (The Joint Commission UP.01.01.01)', async () => {
    const { id } = await readyCase()
    const right = item((s) => s.kind === 'nail' && s.side === 'right' && s.d === 11 && s.len === 380 && s.angle === 130)
    const r = await scan(as.scrub!, id, gs1Scan(right.gtin, { expiry: '2030-12-31', lot: `L${right.id}`, serial: serial() }))
    expect(r.body.checks.map((c: any) => c.code)).toEqual(expect.arrayContaining(['wrong_side', 'size_differs', 'aiming_guide']))
    expect(r.body.message).toMatch(/right side; the case is left/)
  })

  it('a DI not in the catalog is held as unmatched until matched with a reason', async () => {
    const { id } = await readyCase()
    const r = await scan(as.scrub!, id, gs1Scan(randomGtin(), { expiry: '2030-12-31', lot: 'UNK1' }))
    expect(r.status).toBe(201)
    expect(r.body).toMatchObject({ result: 'check', code: 'unmatched' })
    const target = item((s) => s.kind === 'set_screw')
    const noReason = await as.coordinator!.post(`/api/cases/${id}/items/${r.body.item.id}/match`, { itemId: target.id })
    expect(noReason.status).toBe(400)
    expect((await as.scrub!.post(`/api/cases/${id}/items/${r.body.item.id}/match`, { itemId: target.id, reason: 'REF on label' })).status).toBe(403)
    const ok = await as.coordinator!.post(`/api/cases/${id}/items/${r.body.item.id}/match`, { itemId: target.id, reason: 'REF on the label matches' })
    expect(ok.status).toBe(200)
    const it0 = (await as.circulator!.get(`/api/cases/${id}/items`)).body.items[0]
    expect(it0).toMatchObject({ unmatched: false, itemId: target.id, matchedBy: f.users.coordinator.name, matchReason: 'REF on the label matches' })
  })

  it('a wasted pack needs a reason (and a note for “other”); it still comes off the shelf', async () => {
    const { id } = await readyCase()
    const ds = item((s) => s.kind === 'distal_screw' && s.len === 40)
    const before = await onHand(ds.stockLineId)
    const noReason = await scan(as.scrub!, id, gs1Scan(ds.gtin, { expiry: '2030-12-31', lot: `L${ds.id}` }), { disposition: 'wasted' })
    expect(noReason.status).toBe(400)
    expect(noReason.body.data.fields.wasteReason).toMatch(/why/)
    const other = await scan(as.scrub!, id, gs1Scan(ds.gtin, { expiry: '2030-12-31', lot: `L${ds.id}` }), { disposition: 'wasted', wasteReason: 'other' })
    expect(other.body.data.fields.wasteNote).toBeTruthy()
    const ok = await scan(as.scrub!, id, gs1Scan(ds.gtin, { expiry: '2030-12-31', lot: `L${ds.id}` }), { disposition: 'wasted', wasteReason: 'contaminated' })
    expect(ok.status).toBe(201)
    expect(await onHand(ds.stockLineId)).toBe(before - 1)
    const list = (await as.circulator!.get(`/api/cases/${id}/items`)).body
    expect(list.totals).toMatchObject({ wasted: 1, implanted: 0, wasteCost: 100 })
  })

  it('hardware removed from the patient is logged as explanted: its own serial again, past expiry, and no stock taken', async () => {
    // common practice: a device removed from the patient is documented with what its label or record says;
    // it came out of a body, not off the shelf, so neither expiry nor the shelf applies.
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const sn = serial()
    const first = await readyCase()
    expect((await scan(as.scrub!, first.id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: sn }))).status).toBe(201)
    const { id } = await readyCase()
    const before = await onHand(he.stockLineId)
    const out = await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2020-01-31', lot: `L${he.id}`, serial: sn }), { disposition: 'explanted' })
    expect(out.status).toBe(201)
    expect(out.body.item).toMatchObject({ disposition: 'explanted', serial: sn, expiry: '2020-01-31' })
    expect(await onHand(he.stockLineId)).toBe(before)
    const list = (await as.circulator!.get(`/api/cases/${id}/items`)).body
    expect(list.totals).toMatchObject({ implanted: 0, wasted: 0, explanted: 1 })
    // the same expired label as a pack to implant is still refused
    const implant = await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2020-01-31', lot: `L${he.id}`, serial: serial() }))
    expect(implant.status).toBe(422)
    expect(implant.body).toMatchObject({ result: 'refused', code: 'expired' })
  })

  it('manual entry needs the lot and expiry, and is marked as manual', async () => {
    const { id } = await readyCase()
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const missing = await as.circulator!.post(`/api/cases/${id}/items`, { source: 'manual', manual: { gtin: he.gtin }, clientKey: randomUUID() })
    expect(missing.status).toBe(400)
    expect(Object.keys(missing.body.data.fields)).toEqual(expect.arrayContaining(['manual.expiry', 'manual.lot']))
    // a serial alone is not enough: a lot recall searches the lot typed from the label
    const serialOnly = await as.circulator!.post(`/api/cases/${id}/items`, { source: 'manual', manual: { gtin: he.gtin, serial: 'S-ONLY', expiry: '2030-12-31' }, clientKey: randomUUID() })
    expect(serialOnly.status).toBe(400)
    expect(serialOnly.body.data.fields['manual.lot']).toBe('Enter the lot from the label.')
    // and the database holds the same rule for any other path
    await expect(sql`INSERT INTO case_items (case_id, source, disposition, serial, expiry, client_key, recorded_by)
      SELECT ${Number(id)}, 'manual', 'implanted', 'S-SQL', '2030-12-31', ${randomUUID()}, min(id) FROM users`
      .execute(testDb())).rejects.toThrow(/case_items_manual_lot_expiry/)
    const badCheck = await as.circulator!.post(`/api/cases/${id}/items`, { source: 'manual', manual: { gtin: he.gtin.slice(0, 13) + ((Number(he.gtin[13]) + 1) % 10), lot: 'X', expiry: '2030-12-31' }, clientKey: randomUUID() })
    expect(badCheck.status).toBe(400)
    const ok = await as.circulator!.post(`/api/cases/${id}/items`, { source: 'manual', manual: { gtin: he.gtin, lot: `L${he.id}`, expiry: '2030-12-31' }, clientKey: randomUUID() })
    expect(ok.status).toBe(201)
    expect((await as.circulator!.get(`/api/cases/${id}/items`)).body.items[0]).toMatchObject({ source: 'manual', lot: `L${he.id}` })
  })

  it('a real GS1 DataMatrix, read by an independent decoder, lands with its lot, serial and expiry', async () => {
    const { id } = await readyCase()
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const sn = serial()
    // bwip-js draws the symbol, @zxing/library reads it back: the bytes a scanner would send (standards.md Part B)
    const text = await scanLabel('gs1datamatrix', `(01)${he.gtin}(17)301231(10)L${he.id}(21)${sn}`, { mode: 'aim' })
    const r = await scan(as.scrub!, id, text, { source: 'camera' })
    expect(r.status).toBe(201)
    expect(r.body.item).toMatchObject({ di: he.gtin, lot: `L${he.id}`, serial: sn, expiry: '2030-12-31' })
  })

  it('a wedge scanner that types a substitute for GS works once the facility names it', async () => {
    const { id } = await readyCase()
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const sn = serial()
    const wedge = gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: sn }).replace('\u001D', '~')
    // without the setting the lot swallows the serial (GS1 GenSpecs §7.8.4: variable-length fields end at GS)
    const before = await scan(as.scrub!, id, wedge)
    expect(before.body.item?.serial ?? null).not.toBe(sn)
    await testDb().updateTable('facilities').set({ gs_substitute: '~' }).where('id', '=', f.facilityId).execute()
    try {
      const after = await scan(as.scrub!, id, wedge.replace(sn, `${sn}B`))
      expect(after.status).toBe(201)
      expect(after.body.item).toMatchObject({ lot: `L${he.id}`, serial: `${sn}B` })
    } finally {
      await testDb().updateTable('facilities').set({ gs_substitute: null }).where('id', '=', f.facilityId).execute()
    }
  })
})

describe('exactly once', () => {
  it('the same clientKey twice returns the first answer and writes nothing new', async () => {
    const { id } = await readyCase()
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const before = await onHand(he.stockLineId)
    const body = { scan: gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: serial() }), source: 'wedge', clientKey: randomUUID() }
    const a = await as.scrub!.post(`/api/cases/${id}/items`, body)
    const b = await as.scrub!.post(`/api/cases/${id}/items`, body)
    expect(a.status).toBe(201)
    expect(b.status).toBe(201)
    expect(b.body).toEqual({ ...a.body, replayed: true })
    expect((await as.circulator!.get(`/api/cases/${id}/items`)).body.items).toHaveLength(1)
    expect(await onHand(he.stockLineId)).toBe(before - 1)
  })

  it('the same key sent from two devices at once still lands once', async () => {
    const { id } = await readyCase()
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const body = { scan: gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: serial() }), source: 'wedge', clientKey: randomUUID() }
    const rs = await Promise.all(Array.from({ length: 6 }, () => as.scrub!.post(`/api/cases/${id}/items`, body)))
    expect(rs.every((r) => r.status === 201)).toBe(true)
    expect(new Set(rs.map((r) => r.body.item.id)).size).toBe(1)
    expect((await as.circulator!.get(`/api/cases/${id}/items`)).body.items).toHaveLength(1)
  })

  it('concurrent scans of one serial in different cases: one accepted, the rest 409, stock down by exactly one', async () => {
    const cases = await Promise.all([readyCase(), readyCase(), readyCase(), readyCase()])
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const before = await onHand(he.stockLineId)
    const sn = serial()
    const rs = await Promise.all(cases.flatMap((c) => [0, 1].map(() => scan(as.scrub!, c.id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: sn })))))
    expect(rs.filter((r) => r.status === 201)).toHaveLength(1)
    expect(rs.filter((r) => r.status === 409)).toHaveLength(7)
    expect(await onHand(he.stockLineId)).toBe(before - 1)
    const moves = await testDb().selectFrom('stock_movements').select('id').where('stock_line_id', '=', he.stockLineId).where('moved_at', '>', new Date(Date.now() - 60_000)).execute()
    expect(moves.length).toBeGreaterThanOrEqual(1)
  })
})

describe('refusals, roles and bad input', () => {
  it('an unreadable scan is refused with the parser’s code and kept', async () => {
    const { id } = await readyCase()
    const r = await scan(as.scrub!, id, '0109521234500019') // wrong check digit (GS1 GenSpecs §7.9)
    expect(r.status).toBe(422)
    expect(r.body).toMatchObject({ result: 'refused', code: 'bad_check_digit' })
  })

  it('a closed case refuses new packs with 409', async () => {
    const { id } = await readyCase()
    await testDb().updateTable('cases').set({ status: 'closed' }).where('id', '=', id).execute()
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const r = await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: serial() }))
    expect(r.status).toBe(409)
    expect(r.body.code).toBe('case_locked')
  })

  it('coordinator and admin may not log packs; anonymous is 401', async () => {
    const { id } = await readyCase()
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    for (const role of ['coordinator', 'admin']) expect((await scan(as[role]!, id, gs1Scan(he.gtin, { lot: 'X' }))).status).toBe(403)
    expect((await scan(new Client(baseURL), id, gs1Scan(he.gtin, { lot: 'X' }))).status).toBe(401)
  })

  it('malformed bodies are 400 with field messages', async () => {
    const { id } = await readyCase()
    for (const body of [{}, { scan: 'x', source: 'telepathy', clientKey: randomUUID() }, { scan: 'x', source: 'wedge' }, { source: 'wedge', clientKey: randomUUID() }, { scan: 'x'.repeat(600), source: 'wedge', clientKey: randomUUID() }]) {
      const r = await as.scrub!.post(`/api/cases/${id}/items`, body)
      expect(r.status, JSON.stringify(body).slice(0, 60)).toBe(400)
      expect(Object.keys(r.body.data.fields).length).toBeGreaterThan(0)
    }
  })
})

describe('live view', () => {
  it('a device watching the case hears of a new item within a second', async () => {
    const { id } = await readyCase()
    const ctl = new AbortController()
    const res = await fetch(`${baseURL}/api/cases/${id}/events`, { headers: { cookie: as.circulator!.cookieHeader(), accept: 'text/event-stream' }, signal: ctl.signal })
    expect(res.status).toBe(200)
    const reader = res.body!.getReader()
    const dec = new TextDecoder()
    let buf = ''
    const waitFor = async (word: string, ms: number) => {
      const deadline = Date.now() + ms
      while (!buf.includes(word)) {
        const left = deadline - Date.now()
        if (left <= 0) throw new Error(`no "${word}" within ${ms} ms: ${buf}`)
        const chunk = await Promise.race([reader.read(), new Promise<never>((_, rej) => setTimeout(() => rej(new Error(`no "${word}" within ${ms} ms`)), left))])
        buf += dec.decode(chunk.value)
      }
    }
    await waitFor('event: ready', 3000)
    const he = item((s) => s.kind === 'head_element' && s.len === 90)
    const t0 = Date.now()
    const r = await scan(as.scrub!, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: serial() }))
    await waitFor('event: item', 1000)
    expect(buf).toContain(`"id":${r.body.item.id}`)
    expect(Date.now() - t0).toBeLessThan(1000)
    ctl.abort()
  })
})
