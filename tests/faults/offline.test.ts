import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { startServer, type RunningServer } from '../helpers/server-setup'
import { launchBrowser, newPage, open, signIn } from '../helpers/browser'
import { closeTestDb, makeFacility, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { addItems } from '../helpers/catalog'
import { clientFrom } from '../helpers/http'
import { createCase, gs1Scan } from '../helpers/cases'

let server: RunningServer
let browser: Browser
let f: TestFacility

beforeAll(async () => {
  server = await startServer()
  browser = await launchBrowser()
  f = await makeFacility()
})
afterAll(async () => {
  await browser?.close()
  await server?.stop()
  await closeTestDb()
})

describe('the scrub’s phone loses the network', () => {
  it('scans made offline wait on the device, survive a reload, and land exactly once when the network is back', async () => {
    const api = clientFrom(server.url)
    await api.login(f.users.circulator.email, TEST_PASSWORD)
    const id = await createCase(api, f)
    const [set] = await addItems(f, [{ kind: 'set_screw', lot: 'OFF-LOT', onHand: 50 }])

    const { context, page } = await newPage(browser, server.url, 'phone')
    await signIn(page, f.users.scrub.email, TEST_PASSWORD)
    await page.waitForURL((u) => u.pathname === '/')
    await open(page, `/cases/${id}/implants`)
    await page.getByTestId('log-empty').waitFor()

    // the Wi-Fi drops: the writes cannot reach the server
    await context.setOffline(true)
    const wedge = page.getByTestId('wedge')
    for (let i = 0; i < 5; i++) {
      await wedge.fill(gs1Scan(set!.gtin, { expiry: '2030-12-31', lot: 'OFF-LOT', serial: `OFF-${i}-${f.tag}` }))
      await wedge.press('Enter')
    }
    await page.getByTestId('pending-count').filter({ hasText: '5 pending' }).waitFor()
    expect(await page.getByTestId('queue-pending').textContent()).toMatch(/5 scans wait/)
    expect(await testDb().selectFrom('case_items').select('id').where('case_id', '=', id).execute()).toHaveLength(0)

    // the page is reloaded while the server is still unreachable for writes (the page itself loads)
    await context.route('**/api/cases/*/items', (route) => (route.request().method() === 'POST' ? route.abort('internetdisconnected') : route.continue()))
    await context.setOffline(false)
    await page.reload()
    await page.waitForSelector('body[data-hydrated="true"]')
    await page.getByTestId('pending-count').filter({ hasText: '5 pending' }).waitFor()

    // the network is back: every scan lands once
    await context.unroute('**/api/cases/*/items')
    await page.evaluate(() => window.dispatchEvent(new Event('online')))
    await page.getByTestId('totals').filter({ hasText: /5\s*implanted/ }).waitFor({ timeout: 15_000 })
    expect(await page.getByTestId('pending-count').count()).toBe(0)
    const rows = await testDb().selectFrom('case_items').select('serial').where('case_id', '=', id).orderBy('serial').execute()
    expect(rows.map((r) => r.serial)).toEqual([0, 1, 2, 3, 4].map((i) => `OFF-${i}-${f.tag}`))
    await context.close()
  })
})
