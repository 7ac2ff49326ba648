import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { launchBrowser, open, openSignedIn } from '../helpers/browser'
import { closeTestDb, makeFacility, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { addItems, gtinSeries, randomGtin, standardShelf } from '../helpers/catalog'
import { confirm, createCase, gs1Scan, inCaseRecord, reading, scan } from '../helpers/cases'
import { clientFrom, signInRoles } from '../helpers/http'

const baseURL = inject('baseURL')
let browser: Browser
let f: TestFacility
let shelf: Awaited<ReturnType<typeof standardShelf>>
let cart: number

const nail = (d: number, len: number, angle = 130, side: 'left' | 'right' = 'left') =>
  shelf.find((s) => s.kind === 'nail' && s.type === 'long' && s.side === side && s.angle === angle && s.d === d && s.len === len)
const day = (offset: number) => new Date(Date.now() + offset * 86_400_000).toISOString().slice(0, 10)
/** Usable packs of an item at this facility, as the shelf grid counts them. */
async function usable(itemId: number) {
  const rows = await testDb().selectFrom('stock_lines as sl').innerJoin('stock_locations as loc', 'loc.id', 'sl.location_id')
    .select(['sl.on_hand', 'sl.quarantined', 'sl.expiry']).where('sl.item_id', '=', itemId).where('loc.facility_id', '=', f.facilityId).execute()
  const today = day(0)
  return {
    onHand: rows.filter((r) => !r.quarantined && (!r.expiry || r.expiry >= today)).reduce((a, r) => a + r.on_hand, 0),
    held: rows.filter((r) => r.quarantined || (r.expiry && r.expiry < today)).reduce((a, r) => a + r.on_hand, 0),
  }
}
const onHand = async (stockLineId: number) => (await testDb().selectFrom('stock_lines').select('on_hand').where('id', '=', stockLineId).executeTakeFirstOrThrow()).on_hand

// the marker of chart.js in a built chunk: one of its own error messages survives minification
const CHART_JS = "can't acquire context"
function scriptsOf(page: Page): Set<string> {
  const urls = new Set<string>()
  page.on('request', (r) => { if (r.resourceType() === 'script' || r.url().endsWith('.js')) urls.add(r.url()) })
  return urls
}
/** Script errors, refused content (CSP) and hydration mismatches the page reports. */
function problemsOf(page: Page): string[] {
  const out: string[] = []
  page.on('console', (m) => { if (m.type() === 'error' || /mismatch/i.test(m.text())) out.push(m.text()) })
  page.on('pageerror', (e) => out.push(e.message))
  return out
}
async function anyHasChartJs(urls: Iterable<string>) {
  for (const u of urls) if ((await (await fetch(u)).text()).includes(CHART_JS)) return true
  return false
}

beforeAll(async () => {
  browser = await launchBrowser()
  f = await makeFacility()
  shelf = await standardShelf(f)
  const db = testDb()
  // an empty size, a fuller one, and a quarantined lot beside usable packs
  await db.updateTable('stock_lines').set({ on_hand: 0 }).where('id', '=', nail(12, 400).stockLineId).execute()
  await db.updateTable('stock_lines').set({ on_hand: 7 }).where('id', '=', nail(10, 340).stockLineId).execute()
  await db.insertInto('stock_lines').values({ location_id: f.locationId, item_id: nail(11, 360).id, lot: 'Q-HELD', expiry: '2030-12-31', on_hand: 2, quarantined: true }).execute()
  // a theatre cart beside the core store (its code sorts after CORE, so the core store stays the first location)
  cart = (await db.insertInto('stock_locations').values({ facility_id: f.facilityId, code: 'T1-CART', name: 'Theatre 1 cart', theatre_id: f.theatreId }).returning('id').executeTakeFirstOrThrow()).id
  // a line that expires soon
  await addItems(f, [{ kind: 'distal_screw', d: 5, len: 60, lot: 'SOON-1', expiry: day(10), onHand: 2 }])

  // one case: a head element implanted and a distal screw wasted (recorded through the API)
  const circ = clientFrom(baseURL)
  await circ.login(f.users.circulator.email, TEST_PASSWORD)
  const surgeon = clientFrom(baseURL)
  await surgeon.login(f.users.surgeon.email, TEST_PASSWORD)
  const id = await createCase(circ, f)
  await reading(circ, id, 'head_element_length', 92)
  const s = (await circ.get(`/api/cases/${id}/sizing`)).body
  await confirm(surgeon, id, 'head_element', s.headElement.ideal.id)
  const he = shelf.rows.find((r) => r.id === s.headElement.ideal.id)!
  expect((await scan(circ, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}` }))).status).toBe(201)
  const ds = shelf.find((x) => x.kind === 'distal_screw' && x.len === 36)
  const w = await scan(circ, id, gs1Scan(ds.gtin, { expiry: '2030-12-31', lot: `L${ds.id}` }), { disposition: 'wasted', wasteReason: 'contaminated' })
  expect(w.status).toBe(201)
})
afterAll(async () => {
  await browser?.close()
  await closeTestDb()
})

describe('the shelf and the catalog, as the coordinator on the tablet', () => {
  it('shows the shelf by size, receives a pack by scan, and loads the usage charts only when asked', async () => {
    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.coordinator.email, TEST_PASSWORD)
    const scripts = scriptsOf(page)
    const problems = problemsOf(page)
    await open(page, '/shelf')

    // (a) one family at a time; the five families of the standard shelf are offered
    await page.getByTestId('grid-table').waitFor()
    expect(await page.locator('[data-test="families"] [role="tab"]').count()).toBe(5)
    expect(await page.getByTestId('families').textContent()).toContain('Short nails, 130°, either side')
    await page.getByTestId('family-long-130-left').click()
    await page.locator('[data-test="grid-table"][data-family="long-130-left"]').waitFor()

    const full = page.getByTestId('cell-10x340')
    expect(await full.getAttribute('data-on-hand')).toBe(String((await usable(nail(10, 340).id)).onHand))
    expect((await full.textContent())?.trim()).toBe('7')
    const normal = page.getByTestId('cell-11x380')
    expect(Number(await normal.getAttribute('data-on-hand'))).toBe((await usable(nail(11, 380).id)).onHand)
    // held packs are shown apart from the usable count
    const held = page.getByTestId('cell-11x360')
    const h = await usable(nail(11, 360).id)
    expect(h).toEqual({ onHand: 3, held: 2 })
    expect(await held.getAttribute('data-held')).toBe('2')
    expect(await held.textContent()).toContain('2 held')
    // an empty size reads as empty without colour: a dash, a dashed outline and a hatch
    const empty = page.getByTestId('cell-12x400')
    expect(await empty.getAttribute('data-state')).toBe('empty')
    expect((await empty.textContent())?.trim()).toBe('–')
    expect(await empty.getAttribute('aria-label')).toContain('none on hand')
    const look = await empty.evaluate((el) => { const s = getComputedStyle(el); return { border: s.borderTopStyle, bg: s.backgroundImage } })
    expect(look.border).toBe('dashed')
    expect(look.bg).toContain('repeating-linear-gradient')
    await page.getByTestId('grid-legend').waitFor()
    await page.screenshot({ path: '/tmp/shelf-grid.png' })

    // the shelf page has not fetched chart.js
    expect(await anyHasChartJs(scripts)).toBe(false)

    // (b) receive a pack of a line already on the shelf: its count goes up by one
    const line = nail(11, 380)
    await page.getByTestId('tab-lines').click()
    const row = page.getByTestId(`line-${line.stockLineId}`)
    await row.waitFor()
    const before = await onHand(line.stockLineId)
    expect(await page.getByTestId(`onhand-${line.stockLineId}`).textContent()).toBe(String(before))
    const field = page.getByTestId('receive-scan')
    await field.fill(gs1Scan(line.gtin, { expiry: '2030-12-31', lot: `L${line.id}` }))
    await field.press('Enter')
    const band = page.getByTestId('scan-band')
    await band.waitFor()
    // the message first, so that a refusal says why
    expect(await page.getByTestId('scan-message').textContent()).toContain(`lot L${line.id}`)
    expect(await band.getAttribute('data-result')).toBe('accepted')
    await page.getByTestId(`onhand-${line.stockLineId}`).filter({ hasText: String(before + 1) }).waitFor()
    expect(await onHand(line.stockLineId)).toBe(before + 1)
    // a pack the catalog does not know is refused, with what to do next
    await field.fill(gs1Scan(randomGtin(), { expiry: '2030-12-31', lot: 'NOPE' }))
    await field.press('Enter')
    await page.locator('[data-test="scan-band"][data-result="refused"]').waitFor()
    expect(await page.getByTestId('scan-message').textContent()).toContain('Add the item to the catalog first')
    // the quarantined lot is marked in the list
    expect(await page.locator('[data-test^="line-"][data-quarantined="true"]').count()).toBe(1)
    await page.screenshot({ path: '/tmp/shelf-lines.png' })

    // set a par on that line; the reorder for the location then brings it back to par
    await page.getByTestId(`par-${line.stockLineId}`).click()
    await page.getByTestId('par-count').fill('6')
    await page.getByTestId('par-save').click()
    await page.getByTestId('lines-notice').waitFor()
    const par = await testDb().selectFrom('par_levels').select('par').where('item_id', '=', line.id).where('location_id', '=', f.locationId).executeTakeFirstOrThrow()
    expect(par.par).toBe(6)
    await page.getByTestId('tab-replenishment').click()
    await page.getByTestId('rep-table').waitFor()
    expect((await page.getByTestId(`rep-reorder-${line.id}`).textContent())?.trim()).toMatch(new RegExp(`^${6 - (before + 1)}\\b`))
    await page.screenshot({ path: '/tmp/shelf-replenishment.png' })

    // (c) expiring soon: the 10-day line is within 30 days
    await page.getByTestId('tab-expiring').click()
    await page.getByTestId('expiring-lines').waitFor()
    expect(await page.getByTestId('expiring-lines').textContent()).toContain('SOON-1')
    expect(await page.getByTestId('quarantined-lines').textContent()).toContain('Q-HELD')

    // (e) usage: the charts' code arrives now, with the canvas and its table
    await page.getByTestId('tab-usage').click()
    const sizeCard = page.getByTestId('usage-size')
    await sizeCard.locator('canvas').waitFor()
    const canvas = sizeCard.locator('canvas')
    expect(await canvas.getAttribute('role')).toBe('img')
    expect(await canvas.getAttribute('aria-label')).toContain('implants used by size')
    expect(await page.getByTestId('usage-size-table').textContent()).toMatch(/Head element 90 mm\s*1/)
    expect(await page.getByTestId('usage-size-table').locator('caption').textContent()).toContain('Implants used by size')
    await page.getByTestId('usage-waste').locator('canvas').waitFor()
    expect(await page.getByTestId('usage-waste-table').textContent()).toContain('Contaminated or dropped')
    expect(await page.getByTestId('usage-surgeon-table').textContent()).toContain(f.users.surgeon.name)
    // the canvas has been drawn on
    const drawn = await canvas.evaluate((c) => { const el = c as HTMLCanvasElement; return el.width > 0 && el.height > 0 })
    expect(drawn).toBe(true)
    expect(await anyHasChartJs(scripts)).toBe(true)
    await page.screenshot({ path: '/tmp/shelf-usage.png' })
    await page.screenshot({ path: '/tmp/shelf-usage-full.png', fullPage: true })
    // the one refusal is the unknown pack scanned on purpose
    expect(problems.filter((p) => !/status of 422/.test(p))).toEqual([])
    await context.close()
  })

  it('the circulator sees the shelf and can receive, but not count, set par or reorder', async () => {
    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.circulator.email, TEST_PASSWORD)
    await open(page, '/shelf?view=lines')
    await page.getByTestId('receive-scan').waitFor()
    await page.getByTestId('lines').waitFor()
    expect(await page.getByTestId('tab-replenishment').count()).toBe(0)
    expect(await page.locator('[data-test^="adjust-"], [data-test^="par-"]').count()).toBe(0)
    await page.screenshot({ path: '/tmp/shelf-circulator.png' })
    // move two packs to the theatre cart
    const from = nail(10, 340)
    const was = await onHand(from.stockLineId)
    await page.getByTestId(`transfer-${from.stockLineId}`).click()
    await page.getByTestId('transfer-count').fill('2')
    await page.getByTestId('transfer-to').selectOption(String(cart))
    await page.getByTestId('transfer-save').click()
    await page.getByTestId('lines-notice').filter({ hasText: 'Theatre 1 cart' }).waitFor()
    expect(await onHand(from.stockLineId)).toBe(was - 2)
    const moved = await testDb().selectFrom('stock_lines').select(['id', 'on_hand', 'lot']).where('location_id', '=', cart).where('item_id', '=', from.id).executeTakeFirstOrThrow()
    expect(moved).toMatchObject({ on_hand: 2, lot: `L${from.id}` })
    await page.getByTestId(`onhand-${moved.id}`).filter({ hasText: '2' }).waitFor()
    await context.close()
  })

  it('imports an item master: a file with a bad row is refused with the row named, a good file is created', async () => {
    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.coordinator.email, TEST_PASSWORD)
    const problems = problemsOf(page)
    await open(page, '/catalog')
    await page.getByTestId('catalog-table').waitFor()

    const header = 'Item type,Description,Manufacturer,REF,GTIN,Diameter (mm),Length (mm),CCD angle,Side,Nail type,Unit price,Implant card'
    const g = [randomGtin(), randomGtin(), randomGtin()]
    const wrong = g[1]!.slice(0, 13) + String((Number(g[1]!.at(-1)) + 1) % 10)
    const t = f.tag
    const rows = (gtin2: string) => [
      `nail,Import ${t} nail 11 × 380 mm 130° left,Invented Maker,IMP-${t}-1,${g[0]},11,380,130,left,long,1180.00,yes`,
      `head_element,Import ${t} lag screw 95 mm,Invented Maker,IMP-${t}-2,${gtin2},10.5,95,,,,240.00,no`,
      `distal_screw,Import ${t} distal screw 40 mm,Invented Maker,IMP-${t}-3,${g[2]},5,40,,,,35.50,no`,
    ]
    const csv = (lines: string[]) => Buffer.from([header, ...lines].join('\r\n') + '\r\n')

    await page.getByTestId('open-import').click()
    await page.getByTestId('import-file').setInputFiles({ name: 'items-bad.csv', mimeType: 'text/csv', buffer: csv(rows(wrong)) })
    await page.getByTestId('mapping').waitFor()
    expect(await page.getByTestId('rows-read').textContent()).toContain('3 rows read')
    // the guessed mapping is shown in the selects
    expect(await page.getByTestId('map-Item type').inputValue()).toBe('kind')
    expect(await page.getByTestId('map-CCD angle').inputValue()).toBe('angle_deg')
    expect(await page.getByTestId('map-Unit price').inputValue()).toBe('unit_cost')
    await page.getByTestId('import-check').click()
    await page.getByTestId('report').waitFor()
    expect(await page.getByTestId('report-summary').textContent()).toMatch(/3 rows\s*·\s*2 valid\s*·\s*1 problem/)
    const bad = page.getByTestId('report-error')
    expect(await bad.count()).toBe(1)
    expect(await bad.getAttribute('data-row')).toBe('2')
    expect(await bad.textContent()).toContain('GTIN')
    expect(await page.getByTestId('import-run').isDisabled()).toBe(true)
    expect(await page.getByTestId('import-why-not').textContent()).toContain('whole or not at all')
    expect(await testDb().selectFrom('catalog_items').select('id').where('gtin', 'in', [g[0]!, g[2]!]).execute()).toHaveLength(0)
    await page.evaluate(() => window.scrollTo(0, 0))
    await page.screenshot({ path: '/tmp/catalog-import-top.png' })
    await page.getByTestId('import').screenshot({ path: '/tmp/catalog-import-refused.png' })

    // the corrected file: checked, then imported
    await page.getByTestId('import-file').setInputFiles({ name: 'items.csv', mimeType: 'text/csv', buffer: csv(rows(g[1]!)) })
    await page.getByTestId('import-check').click()
    await page.getByTestId('report').waitFor()
    expect(await page.getByTestId('report-summary').textContent()).toMatch(/3 rows\s*·\s*3 valid/)
    const run = page.getByTestId('import-run')
    expect(await run.textContent()).toContain('Import 3 items')
    await run.click()
    await page.getByTestId('import-done').waitFor()
    expect(await page.getByTestId('import-counts').textContent()).toContain('3 created, 0 updated')
    const made = await testDb().selectFrom('catalog_items').select(['gtin', 'kind', 'length_mm', 'unit_cost', 'implant_card']).where('gtin', 'in', g).orderBy('gtin').execute()
    expect(made).toHaveLength(3)
    expect(made.find((m) => m.gtin === g[0])).toMatchObject({ kind: 'nail', length_mm: '380.00', unit_cost: '1180.00', implant_card: true })

    // the list finds the new items
    await page.getByTestId('catalog-search').fill(`Import ${t}`)
    await page.getByTestId('catalog-range').filter({ hasText: 'Items 1–3' }).waitFor()
    expect(await page.locator('[data-test="catalog-table"] tbody tr[data-test^="item-"]').count()).toBe(3)
    await page.evaluate(() => window.scrollTo(0, 0))
    await page.screenshot({ path: '/tmp/catalog.png' })
    expect(problems).toEqual([])
    await context.close()
  })

  it('imports a 20,000-row item master with its progress shown while reading and sending, and no time-out', async () => {
    const N = 20_000
    const lines = ['kind,description,gtin,diameter,length,unit cost']
    gtinSeries(N, 2).forEach((g, i) => lines.push(`distal_screw,Bulk ${f.tag} screw ${i},${g},5,${30 + (i % 11) * 2},35`))
    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.coordinator.email, TEST_PASSWORD)
    await open(page, '/catalog')
    await page.getByTestId('open-import').click()
    // watch the progress bars from the page itself, every frame, so a bar that jumps straight to the end is seen as such
    await page.evaluate(() => {
      const w = window as unknown as { seen: Record<string, number[]> }
      w.seen = { read: [], send: [] }
      const tick = () => {
        const r = document.querySelector<HTMLProgressElement>('[data-test="read-progress"] progress')
        const u = document.querySelector<HTMLProgressElement>('[data-test="upload-progress"] progress')
        if (r) w.seen.read!.push(r.value)
        if (u) w.seen.send!.push(u.hasAttribute('value') ? u.value : -1) // -1: the bar that waits for the server
        requestAnimationFrame(tick)
      }
      tick()
    })
    await page.getByTestId('import-file').setInputFiles({ name: 'master.csv', mimeType: 'text/csv', buffer: Buffer.from(lines.join('\n') + '\n') })
    await page.getByTestId('mapping').waitFor({ timeout: 30_000 })
    expect(await page.getByTestId('rows-read').textContent()).toContain('20,000 rows read')
    await page.getByTestId('import-check').click()
    await page.getByTestId('report').waitFor({ timeout: 60_000 })
    expect(await page.getByTestId('report-summary').textContent()).toMatch(/20,000 rows\s*·\s*20,000 valid/)
    await page.getByTestId('import-run').click()
    await page.getByTestId('import-done').waitFor({ timeout: 60_000 })
    expect(await page.getByTestId('import-counts').textContent()).toContain('20,000 created, 0 updated')
    const seen = await page.evaluate(() => (window as unknown as { seen: Record<string, number[]> }).seen)
    // the file is read in slices: the bar stood somewhere between empty and full on the way
    expect(seen.read!.some((v) => v > 0 && v < 100), `read: ${[...new Set(seen.read)].join(',')}`).toBe(true)
    expect(Math.max(...seen.read!)).toBe(100)
    // and sending it (twice: the check, then the import) showed a bar too
    expect(seen.send!.length).toBeGreaterThan(0)
    const n = await testDb().selectFrom('catalog_items').select(({ fn }) => fn.countAll<number>().as('n')).where('description', 'like', `Bulk ${f.tag} screw %`).executeTakeFirstOrThrow()
    expect(Number(n.n)).toBe(N)
    await context.close()
  }, 120_000)

  it('adds an item with the form: a wrong GTIN check digit is named beside the field', async () => {
    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.coordinator.email, TEST_PASSWORD)
    await open(page, '/catalog')
    await page.getByTestId('open-add').click()
    await page.getByTestId('kind-distal_screw').check()
    // a screw shows its length, not a nail's angle
    await page.getByTestId('f-lengthMm').waitFor()
    expect(await page.getByTestId('f-angleDeg').count()).toBe(0)
    const gtin = randomGtin()
    await page.getByTestId('f-description').fill(`Form ${f.tag} distal screw 44 mm`)
    await page.getByTestId('f-gtin').fill(gtin.slice(0, 13) + String((Number(gtin.at(-1)) + 1) % 10))
    await page.getByTestId('f-lengthMm').fill('44')
    await page.getByTestId('item-save').click()
    expect(await page.getByTestId('e-gtin').textContent()).toContain('check digit')
    await page.getByTestId('f-gtin').fill(gtin)
    await page.getByTestId('item-save').click()
    await page.getByTestId('catalog-notice').waitFor()
    const row = await testDb().selectFrom('catalog_items').select(['kind', 'length_mm', 'angle_deg']).where('gtin', '=', gtin).executeTakeFirstOrThrow()
    expect(row).toEqual({ kind: 'distal_screw', length_mm: '44.00', angle_deg: null })
    await page.screenshot({ path: '/tmp/catalog-added.png' })
    await context.close()
  })

  it('edits an item: an unused one whole, a used one only in its words, with the reason shown', async () => {
    const [free, used] = await addItems(f, [{ kind: 'distal_screw', d: 5, len: 46, lot: 'ED-FREE' }, { kind: 'distal_screw', d: 5, len: 48, lot: 'ED-USED' }])
    const { circulator } = await signInRoles(baseURL, f, TEST_PASSWORD, ['circulator'])
    await inCaseRecord(circulator, f, used!, 'ED-USED')
    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.coordinator.email, TEST_PASSWORD)
    await open(page, '/catalog')
    await page.getByTestId('catalog-search').fill(free!.gtin)
    await page.getByTestId(`edit-${free!.id}`).click()
    await page.getByTestId('item-form').waitFor()
    expect(await page.getByTestId('item-fixed').count()).toBe(0)
    await page.getByTestId('f-lengthMm').fill('47')
    await page.getByTestId('f-description').fill(`Edited ${f.tag} screw 47`)
    await page.getByTestId('item-save').click()
    await page.getByTestId('catalog-notice').filter({ hasText: `Edited ${f.tag} screw 47` }).waitFor()
    const a = await testDb().selectFrom('catalog_items').select(['length_mm', 'description']).where('id', '=', free!.id).executeTakeFirstOrThrow()
    expect([Number(a.length_mm), a.description]).toEqual([47, `Edited ${f.tag} screw 47`])

    await page.getByTestId('catalog-search').fill(used!.gtin)
    await page.getByTestId(`edit-${used!.id}`).click()
    await page.getByTestId('item-fixed').waitFor()
    expect(await page.getByTestId('f-lengthMm').isDisabled()).toBe(true)
    expect(await page.getByTestId('f-gtin').isDisabled()).toBe(true)
    await page.getByTestId('f-unitCost').fill('120.50')
    await page.getByTestId('item-save').click()
    await page.getByTestId('catalog-notice').filter({ hasText: 'Saved the changes' }).waitFor()
    const b = await testDb().selectFrom('catalog_items').select(['length_mm', 'unit_cost']).where('id', '=', used!.id).executeTakeFirstOrThrow()
    expect([Number(b.length_mm), Number(b.unit_cost)]).toEqual([48, 120.5])
    await page.screenshot({ path: '/tmp/catalog-edit.png' })
    await context.close()
  })

  it('adds a stock location from the Locations view and receives a pack into it', async () => {
    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.coordinator.email, TEST_PASSWORD)
    await open(page, '/shelf?view=locations')
    await page.getByTestId('locations').waitFor()
    await page.getByTestId('location-add').click()
    await page.getByTestId('f-code').fill('x')
    await page.getByTestId('location-save').click()
    expect(await page.getByTestId('location-form').textContent()).toMatch(/A code is 2 to 20 letters/)
    await page.getByTestId('f-code').fill('or3-cart')
    await page.getByTestId('f-name').fill(`Theatre 3 cart ${f.tag}`)
    await page.getByTestId('f-theatreId').selectOption({ index: 1 })
    await page.getByTestId('location-save').click()
    await page.getByTestId('location-notice').filter({ hasText: `Added Theatre 3 cart ${f.tag}` }).waitFor()
    const loc = await testDb().selectFrom('stock_locations').select(['id', 'code', 'theatre_id']).where('facility_id', '=', f.facilityId).where('code', '=', 'OR3-CART').executeTakeFirstOrThrow()
    expect(loc.theatre_id).not.toBeNull()
    await page.screenshot({ path: '/tmp/shelf-locations.png' })
    // the new location is offered where packs are received
    await open(page, '/shelf?view=lines')
    expect(await page.locator('select option', { hasText: `Theatre 3 cart ${f.tag}` }).count()).toBeGreaterThan(0)
    await context.close()
  })
})
