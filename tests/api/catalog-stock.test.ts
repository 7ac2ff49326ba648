import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { type Client, signInRoles } from '../helpers/http'
import { closeTestDb, makeFacility, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { addItems, gtinSeries, randomGtin, standardShelf } from '../helpers/catalog'
import { hibcCheckChar } from '../../shared/utils/udi'
import { confirm, createCase, gs1Scan, headElementCase, inCaseRecord, reading, scan } from '../helpers/cases'

const baseURL = inject('baseURL')
let f: TestFacility
const as: Record<string, Client> = {}

beforeAll(async () => {
  f = await makeFacility()
  Object.assign(as, await signInRoles(baseURL, f, TEST_PASSWORD))
})
afterAll(closeTestDb)


describe('catalog import', () => {
  it('a good file makes items; re-importing it changes nothing but updates', async () => {
    const [g1, g2, g3] = gtinSeries(3)
    const csv = `Description,Kind,GTIN,Diameter (mm),Length,Neck-shaft angle,Nail type,Side,Maker,Price\n`
      + `Test nail 10 x 360,nail,${g1},10,360,130,long,left,Fernhollow Medical (demo),1180\n`
      + `Test lag screw 95,lag screw,${g2},10.5,95,,,,Fernhollow Medical (demo),"310,00"\n`
      + `Test locking screw 40,locking screw,${g3},5,40 mm,,,,Fernhollow Medical (demo),95\n`
    const dry = await as.coordinator!.post('/api/catalog/import', { csv, dryRun: true })
    expect(dry.status).toBe(200)
    expect(dry.body).toMatchObject({ rows: 3, valid: 3, errorCount: 0, imported: 0 })
    expect(await testDb().selectFrom('catalog_items').select('id').where('gtin', 'in', [g1!, g2!, g3!]).execute()).toHaveLength(0)
    const real = await as.coordinator!.post('/api/catalog/import', { csv, dryRun: false })
    expect(real.body).toMatchObject({ imported: 3, created: 3, updated: 0 })
    const rows = await testDb().selectFrom('catalog_items').select(['kind', 'length_mm', 'unit_cost']).where('gtin', 'in', [g1!, g2!, g3!]).orderBy('gtin').execute()
    expect(rows.map((r) => [r.kind, Number(r.length_mm), Number(r.unit_cost)])).toEqual([['nail', 360, 1180], ['head_element', 95, 310], ['distal_screw', 40, 95]])
    const again = await as.coordinator!.post('/api/catalog/import', { csv, dryRun: false })
    expect(again.body).toMatchObject({ imported: 3, created: 0, updated: 3 })
    expect(await testDb().selectFrom('catalog_items').select('id').where('gtin', 'in', [g1!, g2!, g3!]).execute()).toHaveLength(3)
  })

  it('keeps both identifiers of a label, and an item already in a case keeps its kind and size on re-import', async () => {
    const [g1] = gtinSeries(1)
    const lic = 'B' + String(Date.now()).slice(-3)
    const head = 'Description,Kind,GTIN,HIBCC DI,Diameter,Length,Price\n'
    const r1 = await as.coordinator!.post('/api/catalog/import', { csv: head + `Test lag screw 100,lag screw,${g1},${lic}LAG1001,10.5,100,300\n`, dryRun: false })
    expect(r1.body).toMatchObject({ imported: 1, created: 1 })
    const item = await testDb().selectFrom('catalog_items').select(['id', 'hibcc_di']).where('gtin', '=', g1!).executeTakeFirstOrThrow()
    expect(item.hibcc_di).toBe(`${lic}LAG1001`)
    await inCaseRecord(as.circulator!, f, { id: item.id, gtin: g1! }, 'IMP-LOT')
    // the maker's new file says 105 mm and a new price: the price changes, the size of what was implanted does not
    const r2 = await as.coordinator!.post('/api/catalog/import', { csv: head + `Test lag screw 100 (new name),lag screw,${g1},,10.5,105,320\n`, dryRun: false })
    expect(r2.body).toMatchObject({ imported: 1, created: 0, updated: 1 })
    const after = await testDb().selectFrom('catalog_items').select(['length_mm', 'unit_cost', 'description', 'hibcc_di']).where('id', '=', item.id).executeTakeFirstOrThrow()
    expect([Number(after.length_mm), Number(after.unit_cost), after.description, after.hibcc_di]).toEqual([100, 320, 'Test lag screw 100 (new name)', `${lic}LAG1001`])
  })

  it('a file with bad rows reports each by row number and reason, and imports nothing', async () => {
    const [g1, g2] = gtinSeries(2)
    const badCheck = g2!.slice(0, 13) + ((Number(g2![13]) + 1) % 10)
    const csv = `description,kind,gtin,diameter_mm,length_mm,angle_deg,nail_type\n`
      + `Good nail,nail,${g1},11,380,130,long\n`
      + `Bad check digit,distal_screw,${badCheck},5,40,,\n`
      + `Nail without angle,nail,${randomGtin()},11,380,,long\n`
      + `Same GTIN again,head_element,${g1},10.5,90,,\n`
    const r = await as.admin!.post('/api/catalog/import', { csv, dryRun: false })
    expect(r.status).toBe(400)
    const rowsWithErrors = [...new Set(r.body.data.errors.map((e: any) => e.row))]
    expect(rowsWithErrors).toEqual([2, 3, 4])
    expect(r.body.data.errors.find((e: any) => e.row === 2).message).toMatch(/check digit/)
    expect(await testDb().selectFrom('catalog_items').select('id').where('gtin', '=', g1!).execute()).toHaveLength(0)
  })

  it('a 20,000-row file validates and imports in one request', async () => {
    const lines = ['description,kind,gtin,length_mm,diameter_mm']
    gtinSeries(20_000, 1).forEach((g, i) => lines.push(`Bulk distal screw ${i},distal_screw,${g},${26 + (i % 18) * 2},5`))
    const r = await as.coordinator!.post('/api/catalog/import', { csv: lines.join('\n'), dryRun: false })
    expect(r.status).toBe(200)
    expect(r.body).toMatchObject({ rows: 20_000, imported: 20_000, errorCount: 0 })
  }, 120_000)

  it('items are created with a validated GTIN, retired rather than deleted; roles enforced', async () => {
    const bad = await as.coordinator!.post('/api/catalog/items', { kind: 'nail', description: 'Bad', gtin: '09521234500019' })
    expect(bad.status).toBe(400)
    expect(bad.body.data.fields).toMatchObject({ gtin: expect.stringMatching(/check digit/), diameterMm: expect.any(String), angleDeg: expect.any(String) })
    const g = randomGtin()
    const ok = await as.coordinator!.post('/api/catalog/items', { kind: 'set_screw', description: 'Test set screw', gtin: g, maker: 'Fernhollow Medical (demo)' })
    expect(ok.status).toBe(201)
    expect((await as.coordinator!.post('/api/catalog/items', { kind: 'set_screw', description: 'Twice', gtin: g })).status).toBe(409)
    expect((await as.coordinator!.patch(`/api/catalog/items/${ok.body.id}`, { active: false })).status).toBe(200)
    const listed = (await as.coordinator!.get(`/api/catalog/items?q=${g}`)).body
    expect(listed).toHaveLength(0)
    expect((await as.coordinator!.get(`/api/catalog/items?q=${g}&includeRetired=true`)).body[0]).toMatchObject({ active: false })
    for (const role of ['circulator', 'scrub', 'surgeon']) expect((await as[role]!.post('/api/catalog/items', { kind: 'other', description: 'x', gtin: randomGtin() })).status, role).toBe(403)
  })
})

describe('catalog edit', () => {
  it('an unused item is corrected whole; once in a case only its words and cost change; audited; roles enforced', async () => {
    const g = randomGtin()
    const body = { kind: 'distal_screw', description: 'Test locking screw 40', gtin: g, diameterMm: 5, lengthMm: 40, unitCost: 95, maker: 'Fernhollow Medical (demo)' }
    const made = await as.coordinator!.post('/api/catalog/items', body)
    expect(made.status).toBe(201)
    const id = made.body.id as number
    // a typo in the length, found before the item was used: fixed in place
    const fixed = await as.coordinator!.put(`/api/catalog/items/${id}`, { ...body, lengthMm: 42, description: 'Test locking screw 42' })
    expect(fixed.status).toBe(200)
    const row = await testDb().selectFrom('catalog_items').select(['length_mm', 'description']).where('id', '=', id).executeTakeFirstOrThrow()
    expect([Number(row.length_mm), row.description]).toEqual([42, 'Test locking screw 42'])
    // the same checks as adding: a wrong check digit names the field
    const badGtin = await as.coordinator!.put(`/api/catalog/items/${id}`, { ...body, gtin: g.slice(0, 13) + ((Number(g[13]) + 1) % 10) })
    expect(badGtin.status).toBe(400)
    expect(badGtin.body.data.fields.gtin).toMatch(/check digit/)

    // used in a case: the record says 42 mm, so the size stays 42 mm
    await testDb().updateTable('catalog_items').set({ length_mm: 42 }).where('id', '=', id).execute()
    await inCaseRecord(as.circulator!, f, { id, gtin: g }, 'EDIT-LOT')
    const sizeChange = await as.coordinator!.put(`/api/catalog/items/${id}`, { ...body, lengthMm: 44, description: 'Test locking screw 42' })
    expect(sizeChange.status).toBe(409)
    expect(sizeChange.body.message).toMatch(/retire it and add the right item/i)
    expect(sizeChange.body.data.fields).toEqual({ lengthMm: 'Fixed: the item is in a case record.' })
    const words = await as.admin!.put(`/api/catalog/items/${id}`, { ...body, lengthMm: 42, description: 'Locking screw 5.0 × 42 mm', unitCost: 99.5 })
    expect(words.status).toBe(200)
    const after = await testDb().selectFrom('catalog_items').select(['length_mm', 'description', 'unit_cost']).where('id', '=', id).executeTakeFirstOrThrow()
    expect([Number(after.length_mm), after.description, Number(after.unit_cost)]).toEqual([42, 'Locking screw 5.0 × 42 mm', 99.5])
    const audit = await testDb().selectFrom('audit_log').select(['action', 'actor_id']).where('entity', '=', 'catalog_item').where('entity_id', '=', String(id)).orderBy('id').execute()
    expect(audit.map((a) => a.action)).toEqual(['catalog.create', 'catalog.update', 'catalog.update'])
    for (const role of ['circulator', 'scrub', 'surgeon']) expect((await as[role]!.put(`/api/catalog/items/${id}`, body)).status, role).toBe(403)
    expect((await as.coordinator!.put('/api/catalog/items/999999999', body)).status).toBe(404)
  })
})

describe('stock', () => {
  it('receiving by scan creates the right line with lot and expiry; again adds to it; same key once', async () => {
    const [item] = await addItems(f, [{ kind: 'set_screw', onHand: 0, lot: 'OLD' }])
    const cart = await testDb().insertInto('stock_locations').values({ facility_id: f.facilityId, code: `CART-${f.tag}`, name: 'Theatre 1 cart' }).returning('id').executeTakeFirstOrThrow()
    const body = { scan: gs1Scan(item!.gtin, { expiry: '2029-05-31', lot: 'RCV-1' }), locationId: cart.id, count: 4, clientKey: randomUUID() }
    const r = await as.coordinator!.post('/api/stock/receive', body)
    expect(r.status).toBe(201)
    expect(r.body).toMatchObject({ created: true, lot: 'RCV-1', expiry: '2029-05-31', received: 4 })
    expect((await as.coordinator!.post('/api/stock/receive', body)).body.replayed).toBe(true)
    await as.circulator!.post('/api/stock/receive', { ...body, count: 2, clientKey: randomUUID() })
    const line = await testDb().selectFrom('stock_lines').selectAll().where('id', '=', r.body.stockLineId).executeTakeFirstOrThrow()
    expect(line).toMatchObject({ location_id: cart.id, lot: 'RCV-1', expiry: '2029-05-31', on_hand: 6 })
    // an unknown DI or an expired pack is refused, saying what to do
    const unknown = await as.coordinator!.post('/api/stock/receive', { ...body, scan: gs1Scan(randomGtin(), { lot: 'X' }), clientKey: randomUUID() })
    expect(unknown.status).toBe(422)
    expect(unknown.body.message).toMatch(/not in the catalog/)
    const expired = await as.coordinator!.post('/api/stock/receive', { ...body, scan: gs1Scan(item!.gtin, { expiry: '2020-01-31', lot: 'X' }), clientKey: randomUUID() })
    expect(expired.body.message).toMatch(/Expired 2020-01-31/)
    // transfer and count adjustment
    const t = await as.coordinator!.post('/api/stock/transfer', { stockLineId: line.id, toLocationId: f.locationId, count: 2, clientKey: randomUUID() })
    expect(t.status).toBe(200)
    const too = await as.coordinator!.post('/api/stock/transfer', { stockLineId: line.id, toLocationId: f.locationId, count: 99, clientKey: randomUUID() })
    expect(too.status).toBe(409)
    const adj = await as.coordinator!.post('/api/stock/adjust', { stockLineId: line.id, count: 3, reason: 'count_correction', clientKey: randomUUID() })
    expect(adj.body).toMatchObject({ delta: -1 })
    expect((await as.circulator!.post('/api/stock/adjust', { stockLineId: line.id, count: 3, reason: 'count_correction', clientKey: randomUUID() })).status).toBe(403)
  })

  it('an implant scan takes one from the right line; par and the reorder report count what was used; below par e-mails the coordinator', async () => {
    const g = await makeFacility()
    const shelf = await standardShelf(g)
    const { circulator: c, coordinator: co, scrub: sc, surgeon: su } = await signInRoles(baseURL, g, TEST_PASSWORD, ['circulator', 'coordinator', 'scrub', 'surgeon'])
    const ds = shelf.rows.find((r) => r.spec.kind === 'distal_screw' && r.spec.len === 40)!
    expect((await co.put('/api/stock/par', { locationId: g.locationId, itemId: ds.id, par: 3 })).status).toBe(200)
    await co.post('/api/stock/replenished', { locationId: g.locationId })
    const id = await createCase(c, g)
    await reading(c, id, 'distal_depth', 39, 1)
    const s = (await c.get(`/api/cases/${id}/sizing`)).body
    await confirm(su, id, 'distal_screw', s.distal[0].ideal.id, 1)
    await scan(sc, id, gs1Scan(ds.gtin, { expiry: '2030-12-31', lot: `L${ds.id}` }))
    await scan(sc, id, gs1Scan(ds.gtin, { expiry: '2030-12-31', lot: `L${ds.id}` }), { disposition: 'wasted', wasteReason: 'wrong_size' })
    const line = await testDb().selectFrom('stock_lines').select('on_hand').where('id', '=', ds.stockLineId).executeTakeFirstOrThrow()
    expect(line.on_hand).toBe(1) // 3 on the shelf, one implanted, one wasted
    const rep = (await co.get(`/api/stock/replenishment?locationId=${g.locationId}`)).body
    const l = rep.lines.find((x: any) => x.itemId === ds.id)
    expect(l).toMatchObject({ used: 2, wasted: 1, onHand: 1, par: 3, reorder: 2, belowPar: true })
    const csv = await co.get(`/api/stock/replenishment.csv?locationId=${g.locationId}`)
    expect(String(csv.body)).toMatch(new RegExp(`${ds.gtin},.*,2,1,1,3,2,100.00,200.00`))
    const mail = await testDb().selectFrom('outbox').selectAll().where('kind', '=', 'low_stock').where('to_address', '=', g.users.coordinator.email).execute()
    expect(mail).toHaveLength(1)
    expect(mail[0]!.subject).toMatch(/Below par/)
  })

  it('expiring-soon: each window holds the lines expiring up to and including its last day, and not the day after', async () => {
    // common practice: "expires within N days" counts today + N as inside (a use-by date is good through that day)
    const g = await makeFacility()
    const { coordinator: co } = await signInRoles(baseURL, g, TEST_PASSWORD, ['coordinator'])
    const day = (n: number) => new Date(Date.now() + n * 86_400_000).toISOString().slice(0, 10) // the test facility keeps UTC
    const edges = [30, 31, 60, 61, 90, 91]
    const rows = await addItems(g, edges.map((n) => ({ kind: 'end_cap' as const, lot: `EXP${n}`, expiry: day(n), onHand: 2 })))
    const lineOf = new Map(edges.map((n, i) => [n, rows[i]!.stockLineId]))
    for (const window of [30, 60, 90]) {
      const ids: number[] = (await co.get(`/api/stock/lines?expiringWithin=${window}`)).body.map((x: any) => x.id)
      for (const n of edges) expect(ids.includes(lineOf.get(n)!), `${n} days in the ${window}-day list`).toBe(n <= window)
    }
    // an empty line is not on the shelf to expire
    await testDb().updateTable('stock_lines').set({ on_hand: 0 }).where('id', '=', lineOf.get(30)!).execute()
    expect((await co.get('/api/stock/lines?expiringWithin=30')).body.map((x: any) => x.id)).not.toContain(lineOf.get(30))
    expect((await co.get('/api/stock/lines?expiringWithin=45')).status).toBe(400)
  })

  it('receiving an HIBCC-labelled pack fills item, lot and expiry from the secondary data', async () => {
    // HIBC LIC 2.6: primary +LIC PCN UoM, secondary /$$3 YYMMDD lot, one mod-43 check character (standards.md A2)
    const lic = 'A' + String(Date.now()).slice(-3)
    const di = `${lic}RCVHIBC1`
    const made = await as.coordinator!.post('/api/catalog/items', { kind: 'set_screw', description: 'Test HIBC set screw', hibccDi: di })
    expect(made.status).toBe(201)
    const body = `+${di}/$$3301130HLOT7`
    const scanText = body + hibcCheckChar(body)
    const r = await as.coordinator!.post('/api/stock/receive', { scan: scanText, locationId: f.locationId, count: 2, clientKey: randomUUID() })
    expect(r.status).toBe(201)
    expect(r.body).toMatchObject({ item: 'Test HIBC set screw', lot: 'HLOT7', expiry: '2030-11-30', received: 2 })
    // a wrong check character is refused as the scan, nothing received
    const bad = await as.coordinator!.post('/api/stock/receive', { scan: body + (hibcCheckChar(body) === 'A' ? 'B' : 'A'), locationId: f.locationId, count: 2, clientKey: randomUUID() })
    expect(bad.status).toBe(422)
    expect(bad.body.data.fields.scan).toBeTruthy()
  })

  it('a count or a transfer that drops a location below par e-mails the coordinator too', async () => {
    const g = await makeFacility()
    const { coordinator: co } = await signInRoles(baseURL, g, TEST_PASSWORD, ['coordinator'])
    const [a, b] = await addItems(g, [{ kind: 'end_cap', lot: 'PAR-A', onHand: 5 }, { kind: 'end_cap', lot: 'PAR-B', onHand: 5 }])
    const cart = await co.post('/api/stock/locations', { code: 'CART-P', name: 'Par test cart' })
    expect(cart.status).toBe(201)
    await co.put('/api/stock/par', { locationId: g.locationId, itemId: a!.id, par: 4 })
    await co.put('/api/stock/par', { locationId: g.locationId, itemId: b!.id, par: 4 })
    const lowMail = async () => (await testDb().selectFrom('outbox').select(['subject']).where('kind', '=', 'low_stock').where('to_address', '=', g.users.coordinator.email).orderBy('id').execute()).map((m) => m.subject)
    // still at par: nothing
    expect((await co.post('/api/stock/adjust', { stockLineId: a!.stockLineId, count: 4, reason: 'count_correction', clientKey: randomUUID() })).body.lowStock).toBe(false)
    expect(await lowMail()).toEqual([])
    const adj = await co.post('/api/stock/adjust', { stockLineId: a!.stockLineId, count: 3, reason: 'damaged', clientKey: randomUUID() })
    expect(adj.body).toMatchObject({ delta: -1, lowStock: true })
    const moved = await co.post('/api/stock/transfer', { stockLineId: b!.stockLineId, toLocationId: cart.body.id, count: 2, clientKey: randomUUID() })
    expect(moved.body.lowStock).toBe(true)
    const subjects = await lowMail()
    expect(subjects).toHaveLength(2)
    expect(subjects[0]).toMatch(/\(3 of 4\)/)
    expect(subjects[1]).toMatch(/\(3 of 4\)/)
  })

  it('stock locations are added and changed from the screens; codes are unique per facility; audited; roles enforced', async () => {
    const g = await makeFacility()
    const { coordinator: co, admin: ad, circulator: c } = await signInRoles(baseURL, g, TEST_PASSWORD, ['coordinator', 'admin', 'circulator'])
    const theatre = await testDb().selectFrom('theatres').select('id').where('facility_id', '=', g.facilityId).executeTakeFirstOrThrow()
    const made = await co.post('/api/stock/locations', { code: 'or1-cart', name: 'Theatre 1 nail cart', theatreId: theatre.id })
    expect(made.status).toBe(201)
    const list = (await co.get('/api/stock/locations')).body
    expect(list.find((l: any) => l.id === made.body.id)).toMatchObject({ code: 'OR1-CART', name: 'Theatre 1 nail cart', theatreId: theatre.id })
    const twice = await ad.post('/api/stock/locations', { code: 'OR1-CART', name: 'Another' })
    expect(twice.status).toBe(409)
    expect(twice.body.data.fields.code).toBe('Already used here.')
    // another facility may use the same code
    expect((await as.coordinator!.post('/api/stock/locations', { code: 'OR1-CART', name: 'Their cart' })).status).toBe(201)
    const bad = await co.post('/api/stock/locations', { code: 'x', name: 'ab' })
    expect(bad.status).toBe(400)
    expect(Object.keys(bad.body.data.fields).sort()).toEqual(['code', 'name'])
    const otherTheatre = await testDb().selectFrom('theatres').select('id').where('facility_id', '=', f.facilityId).executeTakeFirstOrThrow()
    expect((await co.post('/api/stock/locations', { code: 'OR9', name: 'Wrong theatre', theatreId: otherTheatre.id })).status).toBe(400)
    const renamed = await ad.patch(`/api/stock/locations/${made.body.id}`, { code: 'OR1-CART', name: 'Theatre 1 trauma cart', theatreId: null })
    expect(renamed.status).toBe(200)
    expect((await co.get('/api/stock/locations')).body.find((l: any) => l.id === made.body.id)).toMatchObject({ name: 'Theatre 1 trauma cart', theatreId: null })
    // a location of another facility is not this one's to change
    expect((await co.patch(`/api/stock/locations/${f.locationId}`, { code: 'MINE', name: 'Taken over' })).status).toBe(400)
    const audit = await testDb().selectFrom('audit_log').select('action').where('entity', '=', 'stock_location').where('entity_id', '=', String(made.body.id)).orderBy('id').execute()
    expect(audit.map((a) => a.action)).toEqual(['stock.location_add', 'stock.location_change'])
    expect((await c.post('/api/stock/locations', { code: 'OR2', name: 'Circulator cart' })).status).toBe(403)
  })

  it('the shelf grid shows on-hand per diameter × length for each family', async () => {
    const g = await makeFacility()
    await standardShelf(g)
    const { coordinator: co } = await signInRoles(baseURL, g, TEST_PASSWORD, ['coordinator'])
    const grid = (await co.get('/api/stock/shelf')).body
    const fam = grid.find((x: any) => x.nailType === 'long' && x.angleDeg === 130 && x.side === 'left')
    expect(fam.diameters).toEqual([10, 11, 12])
    expect(fam.lengths).toEqual([340, 360, 380, 400])
    expect(fam.cells['11x380'].onHand).toBe(3)
  })

  it('usage: implants by size, waste by reason and month with its cost, per surgeon — counted from the log', async () => {
    const g = await makeFacility()
    const shelf = await standardShelf(g)
    const { circulator: c, coordinator: co, scrub: sc, surgeon: su } = await signInRoles(baseURL, g, TEST_PASSWORD, ['circulator', 'coordinator', 'scrub', 'surgeon'])
    const { id, he } = await headElementCase({ circulator: c, surgeon: su }, g, shelf)
    const ds = shelf.rows.find((r) => r.spec.kind === 'distal_screw' && r.spec.len === 40)!
    expect((await scan(sc, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}` }))).status).toBe(201)
    for (const reason of ['wrong_size', 'wrong_size', 'contaminated']) {
      expect((await scan(sc, id, gs1Scan(ds.gtin, { expiry: '2030-12-31', lot: `L${ds.id}` }), { disposition: 'wasted', wasteReason: reason })).status).toBe(201)
    }
    const r = await co.get('/api/reports/usage?months=3')
    expect(r.status).toBe(200)
    expect(r.body.bySize).toEqual([{ label: 'Head element 90 mm', kind: 'head_element', count: 1 }])
    const month = new Date().toISOString().slice(0, 7) // the test facility keeps UTC
    expect(r.body.wasteByMonth).toEqual(expect.arrayContaining([
      { month, reason: 'wrong_size', count: 2, cost: 200 },
      { month, reason: 'contaminated', count: 1, cost: 100 },
    ]))
    expect(r.body.wasteByMonth).toHaveLength(2)
    expect(r.body.bySurgeon).toEqual([{ surgeon: g.users.surgeon.name, cases: 1, implanted: 1, wasted: 3 }])
    expect((await sc.get('/api/reports/usage')).status).toBe(403)
  })
})
