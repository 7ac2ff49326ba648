import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { freePort, startServer, type RunningServer } from '../helpers/server-setup'
import { launchBrowser, open, openSignedIn } from '../helpers/browser'
import { closeTestDb, makeFacility, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { addItems } from '../helpers/catalog'
import { clientFrom } from '../helpers/http'
import { createCase, gs1Scan, scan } from '../helpers/cases'

// The circulator's tablet follows the case over server-sent events. When the instance it is connected
// to goes away (a deploy, a crash), the page must say so, reconnect by itself, and show what was logged
// meanwhile through another instance — not only what arrives after it is back.
let port: number
let a: RunningServer
let b: RunningServer
let browser: Browser
let f: TestFacility

beforeAll(async () => {
  port = await freePort()
  ;[a, b] = await Promise.all([startServer({}, port), startServer()])
  browser = await launchBrowser()
  f = await makeFacility()
})
afterAll(async () => {
  await browser?.close()
  await Promise.all([a?.stop(), b?.stop()])
  await closeTestDb()
})

describe('the live view loses its server', () => {
  it('shows that it is reconnecting, comes back by itself, and shows the scan made while it was away', async () => {
    const api = clientFrom(b.url)
    await api.login(f.users.circulator.email, TEST_PASSWORD)
    const id = await createCase(api, f)
    const [set] = await addItems(f, [{ kind: 'set_screw', lot: 'LIVE-LOT', onHand: 10 }])
    const scrub = clientFrom(b.url)
    await scrub.login(f.users.scrub.email, TEST_PASSWORD)

    const { page } = await openSignedIn(browser, a.url, 'tablet', f.users.circulator.email, TEST_PASSWORD)
    await open(page, `/cases/${id}/implants`)
    await page.getByTestId('log-empty').waitFor()
    await page.getByText('● Live').waitFor()

    // the instance the tablet is connected to stops
    await a.stop()
    await page.getByText('○ Reconnecting…').waitFor({ timeout: 10_000 })

    // meanwhile the scrub's scan lands through the other instance
    expect((await scan(scrub, id, gs1Scan(set!.gtin, { expiry: '2030-12-31', lot: 'LIVE-LOT', serial: `AWAY-${f.tag}` }))).status).toBe(201)
    expect(await page.getByText(`AWAY-${f.tag}`).count()).toBe(0)

    // the instance is back on the same address: the page reconnects without a reload and catches up
    a = await startServer({}, port)
    await page.getByText('● Live').waitFor({ timeout: 20_000 })
    await page.getByText(`AWAY-${f.tag}`).waitFor({ timeout: 5_000 })
    expect(await page.getByTestId('totals').textContent()).toMatch(/1\s*implanted/)

    // and it is live again: the next scan arrives by itself
    expect((await scan(scrub, id, gs1Scan(set!.gtin, { expiry: '2030-12-31', lot: 'LIVE-LOT', serial: `BACK-${f.tag}` }))).status).toBe(201)
    await page.getByText(`BACK-${f.tag}`).waitFor({ timeout: 5_000 })
  })
})
