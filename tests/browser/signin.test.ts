import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { hydrated, launchBrowser, newPage, openSignedIn, signIn } from '../helpers/browser'
import { closeTestDb, makeFacility, TEST_PASSWORD, type TestFacility } from '../helpers/db'

const baseURL = inject('baseURL')
let browser: Browser
let f: TestFacility

beforeAll(async () => {
  browser = await launchBrowser()
  f = await makeFacility()
})
afterAll(async () => {
  await browser?.close()
  await closeTestDb()
})

describe('sign-in page', () => {
  it('anonymous / goes to /login', async () => {
    const { context, page } = await newPage(browser, baseURL)
    await page.goto('/')
    await page.waitForURL('**/login')
    await expect(page.getByRole('heading', { name: 'Isthmus' }).isVisible()).resolves.toBe(true)
    await context.close()
  })

  it('a wrong password shows a clear message on the form', async () => {
    const { context, page } = await newPage(browser, baseURL)
    await signIn(page, f.users.circulator.email, 'not-the-password')
    const alert = page.getByTestId('login-error')
    await alert.waitFor()
    expect(await alert.textContent()).toMatch(/E-mail or password is not right/)
    expect(page.url()).toMatch(/\/login$/)
    await context.close()
  })

  it('an empty form says what to fill in, without a request', async () => {
    const { context, page } = await newPage(browser, baseURL)
    await page.goto('/login')
    await hydrated(page)
    await page.getByRole('button', { name: 'Sign in' }).click()
    await page.getByText('Enter your e-mail address.').waitFor()
    await page.getByText('Enter your password.').waitFor()
    await context.close()
  })

  it.each(['circulator', 'scrub', 'surgeon', 'coordinator', 'admin'] as const)('%s signs in, sees their home, signs out', async (role) => {
    const { context, page } = await openSignedIn(browser, baseURL, role === 'scrub' ? 'phone' : role === 'coordinator' || role === 'admin' ? 'desktop' : 'tablet', f.users[role].email, TEST_PASSWORD)
    const intro = page.getByTestId('role-intro')
    await intro.waitFor()
    expect(await intro.textContent()).toContain(role[0]!.toUpperCase() + role.slice(1))
    await page.getByRole('heading', { name: 'Today' }).waitFor()
    // the board shows this facility's theatre with its empty state
    await page.getByText('Theatre 1').first().waitFor()
    expect(await page.getByTestId('theatre-empty').count()).toBe(1)
    // who is signed in is on screen
    expect(await page.locator('header').textContent()).toContain(f.users[role].name)
    // the one who may book a case sees the button, the scrub does not
    expect(await page.getByTestId('new-case').count()).toBe(role === 'scrub' ? 0 : 1)
    await page.getByTestId('sign-out').click()
    await page.waitForURL('**/login')
    await page.goto('/')
    await page.waitForURL('**/login')
    await context.close()
  })
})
