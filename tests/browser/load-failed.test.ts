// A fetch that fails (the Wi-Fi drops between two screens, the server restarts) is said in words with a
// retry, never a "Loading…" that does not end, and the retry brings the screen back without a reload.
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { openSignedIn } from '../helpers/browser'
import { TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { closeSuite, openSuite } from '../helpers/suite'
import { createCase, reading } from '../helpers/cases'
import { clientFrom } from '../helpers/http'

const baseURL = inject('baseURL')
let browser: Browser
let f: TestFacility

beforeAll(async () => { ({ browser, f } = await openSuite()) })
afterAll(() => closeSuite(browser))

describe('when a screen cannot load its data', () => {
  it('the implant log and the recommendation say so and recover with Try again', async () => {
    const api = clientFrom(baseURL)
    await api.login(f.users.circulator.email, TEST_PASSWORD)
    const id = await createCase(api, f)
    await reading(api, id, 'head_element_length', 92)

    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.circulator.email, TEST_PASSWORD)
    // the live stream is held off throughout, so that only Try again, not a reconnect's refresh, brings data back
    await context.route(`**/api/cases/${id}/events`, (r) => r.abort('internetdisconnected'))
    // from Today to the case, but the recommendation cannot be fetched
    await context.route(`**/api/cases/${id}/sizing`, (r) => r.abort('internetdisconnected'))
    await page.locator(`a[href="/cases/${id}"]`).first().click()
    const failed = page.getByTestId('load-failed')
    await failed.filter({ hasText: 'The recommendation could not be loaded.' }).waitFor()
    expect(await page.getByText('Loading the recommendation…').count()).toBe(0)
    // the network is back: Try again, and the recommendation is there
    await context.unroute(`**/api/cases/${id}/sizing`)
    await failed.getByRole('button', { name: 'Try again' }).click()
    await page.getByTestId('to-sizes').waitFor()
    expect(await failed.count()).toBe(0)

    // the same for the implant log on the next step
    await context.route(`**/api/cases/${id}/items`, (r) => r.abort('internetdisconnected'))
    await page.getByRole('link', { name: /Implants/ }).first().click()
    await failed.filter({ hasText: 'The implant log could not be loaded.' }).waitFor()
    await context.unroute(`**/api/cases/${id}/items`)
    await failed.getByRole('button', { name: 'Try again' }).click()
    await page.getByTestId('log-empty').waitFor()
    expect(await failed.count()).toBe(0)
    await context.unroute(`**/api/cases/${id}/events`)
    await page.getByText('● Live').waitFor({ timeout: 15_000 })
    await context.close()
  })
})
