import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { clientFrom, type Client, signInRoles } from '../helpers/http'
import { closeTestDb, makeFacility, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { addItems, gtinCheck, randomGtin, standardShelf } from '../helpers/catalog'
import { confirm, createCase, gs1Scan, reading, scan } from '../helpers/cases'

const baseURL = inject('baseURL')
let f: TestFacility
const as: Record<string, Client> = {}

beforeAll(async () => {
  f = await makeFacility()
  Object.assign(as, await signInRoles(baseURL, f, TEST_PASSWORD))
})
afterAll(closeTestDb)

/** GTINs on the demo prefix 952 with their GS1 mod-10 check digit (GS1 General Specifications §7.9). */
function gtins(n: number): string[] {
  const base = `0952${String(Date.now()).slice(-5)}`
  return Array.from({ length: n }, (_, i) => { const body = base + String(i).padStart(4, '0'); return body + gtinCheck(body) })
}

describe('catalog import', () => {
  it('a good file makes items; re-importing it changes nothing but updates', async () => {
    const [g1, g2, g3] = gtins(3)
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

  it('a file with bad rows reports each by row number and reason, and imports nothing', async () => {
    const [g1, g2] = gtins(2)
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
    // indicator digit 1 keeps these apart from the unit-level 0952… GTINs other tests draw at random
    const base = `1952${String(Date.now()).slice(-4)}`
    const lines = ['description,kind,gtin,length_mm,diameter_mm']
    for (let i = 0; i < 20_000; i++) { const body = base + String(i).padStart(5, '0'); lines.push(`Bulk distal screw ${i},distal_screw,${body + gtinCheck(body)},${26 + (i % 18) * 2},5`) }
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
    const c = clientFrom(baseURL); await c.login(g.users.circulator.email, TEST_PASSWORD)
    const co = clientFrom(baseURL); await co.login(g.users.coordinator.email, TEST_PASSWORD)
    const sc = clientFrom(baseURL); await sc.login(g.users.scrub.email, TEST_PASSWORD)
    const su = clientFrom(baseURL); await su.login(g.users.surgeon.email, TEST_PASSWORD)
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

  it('expiring-soon: a line expiring in 30 days is in the 30-day list; one in 31 days only in the 60-day list', async () => {
    const day = (n: number) => new Date(Date.now() + n * 86_400_000).toISOString().slice(0, 10)
    const [a, b] = await addItems(f, [{ kind: 'end_cap', lot: 'EXP30', expiry: day(30), onHand: 2 }, { kind: 'end_cap', lot: 'EXP31', expiry: day(31), onHand: 2 }])
    const in30 = (await as.coordinator!.get('/api/stock/lines?expiringWithin=30')).body.map((x: any) => x.id)
    const in60 = (await as.coordinator!.get('/api/stock/lines?expiringWithin=60')).body.map((x: any) => x.id)
    expect(in30).toContain(a!.stockLineId)
    expect(in30).not.toContain(b!.stockLineId)
    expect(in60).toEqual(expect.arrayContaining([a!.stockLineId, b!.stockLineId]))
    expect((await as.coordinator!.get('/api/stock/lines?expiringWithin=45')).status).toBe(400)
  })

  it('the shelf grid shows on-hand per diameter × length for each family', async () => {
    const g = await makeFacility()
    await standardShelf(g)
    const co = clientFrom(baseURL); await co.login(g.users.coordinator.email, TEST_PASSWORD)
    const grid = (await co.get('/api/stock/shelf')).body
    const fam = grid.find((x: any) => x.nailType === 'long' && x.angleDeg === 130 && x.side === 'left')
    expect(fam.diameters).toEqual([10, 11, 12])
    expect(fam.lengths).toEqual([340, 360, 380, 400])
    expect(fam.cells['11x380'].onHand).toBe(3)
  })

  it('usage: implants by size, waste by reason and month, per surgeon', async () => {
    const r = await as.coordinator!.get('/api/reports/usage?months=3')
    expect(r.status).toBe(200)
    expect(Array.isArray(r.body.bySize)).toBe(true)
    expect((await as.scrub!.get('/api/reports/usage')).status).toBe(403)
  })
})
