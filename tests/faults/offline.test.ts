import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { startServer, type RunningServer } from '../helpers/server-setup'
import { keyInReading, launchBrowser, open, openSignedIn } from '../helpers/browser'
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

    const { context, page } = await openSignedIn(browser, server.url, 'phone', f.users.scrub.email, TEST_PASSWORD)
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

describe('the circulator’s tablet loses the network', () => {
  it('readings entered offline wait on the device, survive a reload, land once; one refused later is shown, not dropped', async () => {
    const api = clientFrom(server.url)
    await api.login(f.users.circulator.email, TEST_PASSWORD)
    const id = await createCase(api, f, { procedure: 'short_nail', side: 'right' })
    const other = await createCase(api, f, { procedure: 'short_nail', side: 'left' })

    const { context, page } = await openSignedIn(browser, server.url, 'tablet', f.users.circulator.email, TEST_PASSWORD)
    await open(page, `/cases/${id}`)
    await page.getByRole('heading', { name: 'Last reamer' }).waitFor()

    await context.setOffline(true)
    await keyInReading(page, '11.5', { waitSaved: false })
    // kept on the device, and the list moves on as after a save
    await page.getByTestId('saved').filter({ hasText: 'Saved 11.5 mm on this device' }).waitFor()
    await page.getByRole('heading', { name: 'Nail length' }).waitFor()
    await keyInReading(page, '205', { waitSaved: false })
    await page.getByRole('heading', { name: 'Neck-shaft angle' }).waitFor()
    await page.getByTestId('pending-count').filter({ hasText: '2 pending' }).waitFor()
    expect(await page.getByTestId('readings-waiting').textContent()).toMatch(/2 readings wait on this device/)
    expect(await page.getByTestId('step-reamed_diameter:0').textContent()).toMatch(/11\.5 mm · waiting/)
    expect(await testDb().selectFrom('readings').select('id').where('case_id', '=', id).execute()).toHaveLength(0)

    // reloaded while writes still cannot get through (the page itself loads)
    await context.route('**/api/cases/*/readings', (route) => (route.request().method() === 'POST' ? route.abort('internetdisconnected') : route.continue()))
    await context.setOffline(false)
    await page.reload()
    await page.waitForSelector('body[data-hydrated="true"]')
    await page.getByTestId('pending-count').filter({ hasText: '2 pending' }).waitFor()

    // back: both land once, in the order entered, and the list shows them as saved
    await context.unroute('**/api/cases/*/readings')
    await page.evaluate(() => window.dispatchEvent(new Event('online')))
    await page.getByTestId('step-nail_length:0').filter({ hasText: '205 mm', hasNotText: 'waiting' }).waitFor({ timeout: 15_000 })
    expect(await page.getByTestId('step-reamed_diameter:0').textContent()).toMatch(/11\.5 mm$/)
    expect(await page.getByTestId('pending-count').count()).toBe(0)
    const rows = await testDb().selectFrom('readings').select(['kind', 'value']).where('case_id', '=', id).orderBy('id').execute()
    expect(rows.map((r) => [r.kind, Number(r.value)])).toEqual([['reamed_diameter', 11.5], ['nail_length', 205]])

    // a reading of another case waits offline while that case is closed on another device
    await open(page, `/cases/${other}`)
    await page.getByRole('heading', { name: 'Last reamer' }).waitFor()
    await context.setOffline(true)
    await keyInReading(page, '12', { waitSaved: false })
    await page.getByTestId('saved').filter({ hasText: 'on this device' }).waitFor()
    await testDb().updateTable('cases').set({ status: 'closed' }).where('id', '=', other).execute() // what a close from another device leaves
    await context.setOffline(false)
    await page.evaluate(() => window.dispatchEvent(new Event('online')))
    const held = page.getByTestId('reading-held')
    await held.waitFor({ timeout: 15_000 })
    expect(await held.textContent()).toMatch(/Not saved: Last reamer 12 mm\.[\s\S]*closed/)
    expect(await testDb().selectFrom('readings').select('id').where('case_id', '=', other).execute()).toHaveLength(0)
    // it stays through a reload until the person dismisses it
    await page.reload()
    await page.waitForSelector('body[data-hydrated="true"]')
    await held.waitFor()
    await held.getByRole('button', { name: 'Dismiss' }).click()
    await held.waitFor({ state: 'detached' })
    await context.close()
  })
})
