// Colour is never the only signal: the scan band for accepted / check / refused differs in icon and words.
// WCAG 2.2 SC 1.4.1 Use of Color; DESIGN.md (colour, icon and words together).
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { open, openSignedIn } from '../helpers/browser'
import { TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { closeSuite, openSuite, type Shelf } from '../helpers/suite'
import { addItems } from '../helpers/catalog'
import { gs1Scan, headElementCase } from '../helpers/cases'
import { signInRoles } from '../helpers/http'

const baseURL = inject('baseURL')
let browser: Browser
let f: TestFacility
let shelf: Shelf

beforeAll(async () => { ({ browser, f, shelf } = await openSuite()) })
afterAll(() => closeSuite(browser))

async function bandOf(page: Page, result: string) {
  const band = page.locator(`[data-test="scan-band"][data-result="${result}"]`)
  await band.waitFor()
  return {
    word: (await band.locator('p').first().textContent())?.trim(),
    icon: await band.locator('svg').innerHTML(),
    colour: await band.evaluate((e) => getComputedStyle(e).backgroundColor),
  }
}

describe('the scan band', () => {
  it('says accepted, check and refused with different words and icons, not only colours', async () => {
    const { id, he } = await headElementCase(await signInRoles(baseURL, f, TEST_PASSWORD, ['circulator', 'surgeon']), f, shelf)
    const { context, page } = await openSignedIn(browser, baseURL, 'phone', f.users.scrub.email, TEST_PASSWORD)
    await open(page, `/cases/${id}/implants`)
    const wedge = page.getByTestId('wedge')
    const ds = shelf.rows.find((r) => r.spec.kind === 'distal_screw' && r.spec.len === 36)!

    await wedge.fill(gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: 'BAND-1' }))
    await wedge.press('Enter')
    const accepted = await bandOf(page, 'accepted')

    // Waste chosen without a reason: the page asks to choose one (a "check")
    await page.getByTestId('mode-waste').click()
    await wedge.fill(gs1Scan(ds.gtin, { expiry: '2030-12-31', lot: `L${ds.id}` }))
    await wedge.press('Enter')
    const check = await bandOf(page, 'check')
    await page.getByTestId('mode-implant').click()

    const [old] = await addItems(f, [{ kind: 'distal_screw', d: 5, len: 40, lot: 'OLD', expiry: '2021-03-31' }])
    await wedge.fill(gs1Scan(old!.gtin, { expiry: '2021-03-31', lot: 'OLD' }))
    await wedge.press('Enter')
    const refused = await bandOf(page, 'refused')

    expect([accepted.word, check.word, refused.word]).toEqual(['Accepted', 'Check', 'Refused'])
    expect(new Set([accepted.icon, check.icon, refused.icon]).size).toBe(3)
    expect(new Set([accepted.colour, check.colour, refused.colour]).size).toBe(3)
    await context.close()
  })
})
