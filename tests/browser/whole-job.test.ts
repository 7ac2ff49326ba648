// The whole job, in chromium, with four people on their own devices at once: the circulator (tablet) opens the
// case from Today, enters the readings and confirms the sizes; the scrub (phone) logs every pack from label
// images (a photo of the nail's DataMatrix, the wedge scanner for the head element, two distal screws and the
// set screw), wastes one distal screw and is refused an expired pack; the circulator closes the log; the surgeon (desktop) reviews and signs; the
// coordinator (desktop) searches the nail's lot and finds this patient. Every step checks what the person sees.
// The label images are made by bwip-js (an encoder independent of our parser) and read by the page's own decoder.
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { keyInReading, newPage, open, signIn } from '../helpers/browser'
import { testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { closeSuite, openSuite, type Shelf } from '../helpers/suite'
import { createCase, gs1Scan, newCaseBody } from '../helpers/cases'
import { signInRoles } from '../helpers/http'
import { makeSymbolPng } from '../helpers/barcodes'

const baseURL = inject('baseURL')
let browser: Browser
let f: TestFacility
let shelf: Shelf

beforeAll(async () => { ({ browser, f, shelf } = await openSuite()) })
afterAll(() => closeSuite(browser))

async function wedgeScan(page: Page, text: string) {
  await page.getByTestId('wedge').fill(text)
  await page.getByTestId('wedge').press('Enter')
}

const yymmdd = (iso: string) => iso.slice(2, 4) + iso.slice(5, 7) + iso.slice(8, 10)

describe('the whole job', () => {
  it('readings → sizes → scans and checks → signed record → the lot found again', async () => {
    const api = await signInRoles(baseURL, f, TEST_PASSWORD, ['circulator'])
    const body = newCaseBody(f, { procedure: 'short_nail', side: 'right' })
    const id = await createCase(api.circulator!, f, body)
    const patient = `${body.patient.familyName}, ${body.patient.givenName}`
    const tag = f.tag.toUpperCase().slice(0, 6)
    const NAIL_LOT = `WJ${tag}N`

    const circ = await newPage(browser, baseURL, 'tablet')
    const scrub = await newPage(browser, baseURL, 'phone')
    const surgeon = await newPage(browser, baseURL, 'desktop')
    const coord = await newPage(browser, baseURL, 'desktop')
    await Promise.all([
      signIn(circ.page, f.users.circulator.email, TEST_PASSWORD), signIn(scrub.page, f.users.scrub.email, TEST_PASSWORD),
      signIn(surgeon.page, f.users.surgeon.email, TEST_PASSWORD), signIn(coord.page, f.users.coordinator.email, TEST_PASSWORD),
    ])
    for (const c of [circ, scrub, surgeon, coord]) await c.page.waitForURL((u) => u.pathname === '/')

    // --- circulator: Today → the case → readings
    const c = circ.page
    await c.getByRole('link', { name: new RegExp(body.patient.familyName) }).first().click()
    await c.waitForURL((u) => u.pathname === `/cases/${id}`)
    await c.getByRole('heading', { name: 'Last reamer' }).waitFor()
    await keyInReading(c, '11.5')
    await c.getByRole('heading', { name: 'Nail length' }).waitFor()
    await keyInReading(c, '205')
    await keyInReading(c, '131')
    await c.getByRole('heading', { name: 'Head element reading' }).waitFor()
    await keyInReading(c, '95')
    await c.getByRole('heading', { name: 'Planned compression' }).waitFor()
    await c.getByRole('group', { name: 'Common compression choices' }).getByRole('button', { name: '5 mm' }).click()
    await c.getByTestId('save-reading').click()
    await c.getByRole('heading', { name: 'Distal screw 1 depth' }).waitFor()
    await keyInReading(c, '38')
    // the second distal locking screw, measured with the depth gauge in its own hole
    await c.getByTestId('add-distal').click()
    await c.getByRole('heading', { name: 'Distal screw 2 depth' }).waitFor()
    await keyInReading(c, '41')

    // --- circulator: Sizes, each proposal confirmed (the nail after the aiming guide is checked)
    await open(c, `/cases/${id}/sizes`)
    await c.getByTestId('caution').first().waitFor()
    expect(await c.getByTestId('caution').first().textContent()).toMatch(/surgeon decides/)
    await c.getByTestId('guide-ack').check()
    for (let n = 0; n < 4; n++) {
      const next = c.getByTestId('confirm-proposed').first()
      await next.waitFor()
      await next.click()
      await c.waitForTimeout(300)
    }
    await expect.poll(async () => (await testDb().selectFrom('sizing_decisions').select('component').where('case_id', '=', id).execute()).map((d) => d.component).sort(), { timeout: 10_000 })
      .toEqual(['distal_screw', 'distal_screw', 'head_element', 'nail'])
    const sizing = (await api.circulator!.get(`/api/cases/${id}/sizing`)).body
    const gtinOf = (itemId: number) => shelf.rows.find((r) => r.id === itemId)!.gtin
    const nailGtin = gtinOf(sizing.nail.decision.chosenItemId)
    const heGtin = gtinOf(sizing.headElement.decision.chosenItemId)
    const dsGtin = gtinOf(sizing.distal[0].decision.chosenItemId)
    const ds2Gtin = gtinOf(sizing.distal[1].decision.chosenItemId)
    expect(ds2Gtin).not.toBe(dsGtin) // 38 mm → 38, 41 mm → 42 (rounded up: the tip passes the far cortex)
    const setGtin = shelf.rows.find((r) => r.spec.kind === 'set_screw')!.gtin

    // --- scrub: the implants step on the phone
    const s = scrub.page
    await open(s, `/cases/${id}/implants`)
    await s.getByTestId('log-empty').waitFor()
    const band = s.getByTestId('scan-band')

    // the nail, from a photo of its label (GS1 DataMatrix)
    const nailLabel = await makeSymbolPng('gs1datamatrix', `(01)${nailGtin}(17)${yymmdd('2030-12-31')}(10)${NAIL_LOT}(21)WJ${tag}1`)
    await s.getByTestId('photo-input').setInputFiles({ name: 'nail-label.png', mimeType: 'image/png', buffer: nailLabel })
    await band.filter({ hasText: NAIL_LOT }).or(band.filter({ hasText: /aiming guide/i })).waitFor({ timeout: 20_000 })
    expect(['accepted', 'check']).toContain(await band.getAttribute('data-result'))

    // head element and distal screw with the wedge scanner
    await wedgeScan(s, gs1Scan(heGtin, { expiry: '2030-12-31', lot: `WJ${tag}H` }))
    await band.filter({ hasText: `WJ${tag}H` }).waitFor()
    expect(await band.getAttribute('data-result')).toBe('accepted')
    // one screw dropped: opened, not implanted — wasted, with its reason
    await s.getByTestId('mode-waste').click()
    await s.getByTestId('waste-contaminated').click()
    await wedgeScan(s, gs1Scan(dsGtin, { expiry: '2030-12-31', lot: `WJ${tag}W` }))
    await band.filter({ hasText: `WJ${tag}W` }).waitFor()
    await wedgeScan(s, gs1Scan(dsGtin, { expiry: '2030-12-31', lot: `WJ${tag}D` }))
    await band.filter({ hasText: `WJ${tag}D` }).waitFor()
    await wedgeScan(s, gs1Scan(ds2Gtin, { expiry: '2030-12-31', lot: `WJ${tag}E` }))
    await band.filter({ hasText: `WJ${tag}E` }).waitFor()
    expect(await band.getAttribute('data-result')).toBe('accepted')
    // the set screw locks the head element in the nail
    await wedgeScan(s, gs1Scan(setGtin, { expiry: '2030-12-31', lot: `WJ${tag}S` }))
    await band.filter({ hasText: `WJ${tag}S` }).waitFor()
    // an expired pack is refused, in words, and nothing is logged for it
    await wedgeScan(s, gs1Scan(dsGtin, { expiry: '2024-01-31', lot: `WJ${tag}X` }))
    await band.filter({ hasText: /Expired 2024-01-31/ }).waitFor()
    expect(await band.getAttribute('data-result')).toBe('refused')
    await s.getByTestId('totals').filter({ hasText: /5\s*implanted\s*·\s*1\s*wasted/ }).waitFor()

    // the circulator's tablet shows the same log live; a check left open is acknowledged there
    await open(c, `/cases/${id}/implants`)
    await c.getByTestId('totals').filter({ hasText: /5\s*implanted/ }).waitFor()
    for (const ack of await c.locator('[data-test^="ack-"]').all()) await ack.click()
    await expect.poll(async () => c.locator('[data-test^="ack-"]').count()).toBe(0)

    // --- circulator closes the log from the Record step
    await open(c, `/cases/${id}/record`)
    await c.getByTestId('ready').waitFor()
    await c.getByTestId('close-case').click()
    await c.getByTestId('close-confirm').click()
    await c.getByTestId('sign').waitFor()

    // --- surgeon reviews and signs on the desktop
    const d = surgeon.page
    // Today tells the surgeon the record waits for them, and leads to it
    await open(d, '/')
    const task = d.getByTestId('task-to_sign')
    await task.waitFor()
    expect(await task.textContent()).toContain('1 implant record waits for your signature.')
    await task.getByRole('link').first().click()
    await d.waitForURL((u) => u.pathname === `/cases/${id}/record`)
    // what went in, and what was wasted and why, on the Implants step; then the Record step to sign
    await open(d, `/cases/${id}/implants`)
    await d.getByTestId('totals').filter({ hasText: /5\s*implanted\s*·\s*1\s*wasted/ }).waitFor()
    const log = await d.locator('main').textContent()
    expect(log).toContain(NAIL_LOT)
    expect(log).toContain('Contaminated or dropped')
    await open(d, `/cases/${id}/record`)
    await d.getByTestId('sign-form').waitFor()
    await d.getByTestId('sign-password').fill(TEST_PASSWORD)
    await d.getByTestId('sign-submit').click()
    await d.getByTestId('version-1').waitFor({ timeout: 15_000 })
    expect(await d.getByTestId('case-status').first().textContent()).toContain('Signed')

    // --- coordinator finds the patient by the nail's lot
    const k = coord.page
    await open(k, '/trace')
    await k.getByTestId('trace-lot').fill(NAIL_LOT)
    await k.getByTestId('trace-submit').click()
    await k.getByTestId('trace-table').waitFor()
    expect(await k.getByTestId('trace-count').textContent()).toBe('1 patient, 1 implant')
    expect(await k.getByTestId('row-mrn').allTextContents()).toEqual([`MRN ${body.patient.mrn}`])
    expect(await k.getByTestId('trace-table').textContent()).toContain(patient)

    const logged = await testDb().selectFrom('case_items').select(['disposition', 'lot']).where('case_id', '=', id).orderBy('id').execute()
    expect(logged.map((r) => `${r.disposition}:${r.lot}`)).toEqual([`implanted:${NAIL_LOT}`, `implanted:WJ${tag}H`, `wasted:WJ${tag}W`, `implanted:WJ${tag}D`, `implanted:WJ${tag}E`, `implanted:WJ${tag}S`])
    for (const x of [circ, scrub, surgeon, coord]) await x.context.close()
  }, 180_000)
})
