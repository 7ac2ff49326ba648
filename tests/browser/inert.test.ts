// Hostile text in a patient's name is shown as text: no script runs, no dialog opens, the characters
// appear literally. And the pages work under the Content-Security-Policy the server sends: no part of
// the app is blocked by it, while a script slipped into the page is.
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Browser, BrowserContext, Page } from 'playwright-core'
import { hydrated, launchBrowser, newPage, open, signIn } from '../helpers/browser'
import { closeTestDb, makeFacility, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { createCase, newCaseBody } from '../helpers/cases'
import { clientFrom } from '../helpers/http'

const baseURL = inject('baseURL')
const SQLISH = "Robert'); DROP TABLE patients;--"
const SCRIPT = '<script>alert(1)</script>'
const IMG = '<img src=x onerror=alert(2)>'
let browser: Browser
let f: TestFacility
const ids: number[] = []

beforeAll(async () => {
  browser = await launchBrowser()
  f = await makeFacility()
  const api = clientFrom(baseURL)
  await api.login(f.users.circulator.email, TEST_PASSWORD)
  for (const familyName of [SQLISH, SCRIPT]) {
    ids.push(await createCase(api, f, { patient: { ...newCaseBody(f).patient, familyName, givenName: IMG } }))
  }
})
afterAll(async () => {
  await browser?.close()
  await closeTestDb()
})

interface Watched { context: BrowserContext; page: Page; dialogs: string[]; violations: string[] }

/** A signed-in page that records every dialog and every CSP violation. */
async function watchedPage(): Promise<Watched> {
  const { context, page } = await newPage(browser, baseURL, 'tablet')
  const dialogs: string[] = []
  const violations: string[] = []
  page.on('dialog', (d) => { dialogs.push(d.message()); void d.dismiss() })
  page.on('console', (m) => { if (/Content Security Policy/i.test(m.text())) violations.push(m.text()) })
  await context.exposeFunction('reportViolation', (v: string) => { violations.push(v) })
  await context.addInitScript(() => {
    document.addEventListener('securitypolicyviolation', (e) => {
      void (window as unknown as { reportViolation: (v: string) => void }).reportViolation(`${e.violatedDirective} ${e.blockedURI} ${e.sourceFile}:${e.lineNumber}:${e.columnNumber} ${location.pathname}`)
    })
  })
  await signIn(page, f.users.circulator.email, TEST_PASSWORD)
  await page.waitForURL((u) => u.pathname === '/')
  return { context, page, dialogs, violations }
}

describe('hostile names are inert', () => {
  it('the Today board and every step of the case show them literally, and nothing runs', async () => {
    const w = await watchedPage()
    const { page } = w
    await page.getByRole('heading', { name: 'Today' }).waitFor()
    for (const name of [SQLISH, SCRIPT]) await page.getByText(`${name}, ${IMG}`, { exact: true }).waitFor()

    for (const [id, name] of [[ids[0]!, SQLISH], [ids[1]!, SCRIPT]] as const) {
      await open(page, `/cases/${id}`)
      const heading = page.getByTestId('case-header').getByRole('heading', { level: 1 })
      await heading.waitFor()
      expect(await heading.innerText()).toContain(`${name}, ${IMG}`)
      // the page title is text too
      expect(await page.title()).toBe(`${name} · Case · Isthmus`)
      // through each step by the stepper, so chunks load the way a person makes them load
      for (const [step, path] of [['Sizes', '/sizes'], ['Implants', '/implants'], ['Record', '/record'], ['Readings', '']] as const) {
        await page.getByRole('navigation', { name: 'Case steps' }).getByRole('link', { name: step }).click()
        await page.waitForURL((u) => u.pathname === `/cases/${id}${path}`)
        await page.locator('[aria-current="step"]', { hasText: step }).waitFor()
        expect(await heading.innerText()).toContain(name)
      }
    }
    // no element made from the names: no <img src=x>, no script with alert
    expect(await page.locator('img[src="x"]').count()).toBe(0)
    expect(await page.locator('script', { hasText: 'alert(' }).count()).toBe(0)
    await page.waitForTimeout(300) // an onerror handler would have fired by now
    expect(w.dialogs).toEqual([])
    // zod 4 tries `new Function('')` once per page load to pick its fast path and falls back when the
    // policy refuses; that probe is the only refusal allowed (zod's `jitless` setting would end it)
    expect(w.violations.filter((v) => !/^script-src eval /.test(v))).toEqual([])

    // the record in the database is still there, and still verbatim
    const rows = await testDb().selectFrom('patients').select('family_name').where('facility_id', '=', f.facilityId).orderBy('id').execute()
    expect(rows.map((r) => r.family_name)).toEqual([SQLISH, SCRIPT])
    await w.context.close()
  })

  it('the watchers above would have seen it: a dialog is caught, an injected script is blocked and reported', async () => {
    const w = await watchedPage()
    const { page } = w
    await page.evaluate(() => { setTimeout(() => alert('control'), 0) })
    await page.waitForTimeout(200)
    expect(w.dialogs).toEqual(['control'])
    // what an injection would do: a script element without the page's nonce
    const ran = await page.evaluate(async () => {
      const s = document.createElement('script')
      s.textContent = 'window.__injected = true'
      document.head.append(s)
      await new Promise((r) => setTimeout(r, 100))
      return (window as unknown as { __injected?: boolean }).__injected === true
    })
    expect(ran).toBe(false)
    // an inline script refused (not zod's eval probe, which every page load reports)
    await expect.poll(() => w.violations.filter((v) => /^script-src(-elem)? inline /.test(v)).length).toBe(1)
    await w.context.close()
  })
})

describe('the policy leaves the app what it needs', () => {
  it('the camera is allowed for this origin and the microphone is not', async () => {
    const { context, page } = await newPage(browser, baseURL, 'tablet')
    await page.goto('/login')
    await hydrated(page)
    const allowed = await page.evaluate(() => {
      const p = (document as unknown as { permissionsPolicy?: { allowsFeature: (f: string) => boolean }; featurePolicy?: { allowsFeature: (f: string) => boolean } })
      const policy = p.permissionsPolicy ?? p.featurePolicy
      return policy ? { camera: policy.allowsFeature('camera'), microphone: policy.allowsFeature('microphone') } : null
    })
    expect(allowed).toEqual({ camera: true, microphone: false })
    await context.close()
  })
})
