// playwright-core driving Debian's chromium (no downloaded browser). Flags keep chromium off the network.
import { chromium, selectors, type Browser, type BrowserContext, type Page } from 'playwright-core'

export const CHROMIUM_ARGS = [
  '--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync',
]

export const VIEWPORTS = {
  tablet: { width: 1180, height: 820 },
  phone: { width: 390, height: 844 },
  desktop: { width: 1440, height: 900 },
} as const

export function launchBrowser(): Promise<Browser> {
  // our markup names test hooks data-test
  selectors.setTestIdAttribute('data-test')
  return chromium.launch({ executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium', args: CHROMIUM_ARGS })
}

export async function newPage(browser: Browser, baseURL: string, viewport: keyof typeof VIEWPORTS = 'tablet'):
  Promise<{ context: BrowserContext; page: Page }> {
  const context = await browser.newContext({ baseURL, viewport: VIEWPORTS[viewport], hasTouch: viewport !== 'desktop' })
  const page = await context.newPage()
  return { context, page }
}

/** Sign in through the form, as a person would. */
export async function signIn(page: Page, email: string, password: string): Promise<void> {
  await page.goto('/login')
  await hydrated(page)
  await page.getByLabel('E-mail').fill(email)
  await page.getByLabel('Password').fill(password)
  await page.getByRole('button', { name: 'Sign in' }).click()
}

/** Wait until the app has hydrated (app.vue marks the body), as a person waits for a page to be ready. */
export async function hydrated(page: Page): Promise<void> {
  await page.waitForSelector('body[data-hydrated="true"]', { timeout: 15_000 })
}

/** Go to a page and wait until it is ready to use. */
export async function open(page: Page, path: string): Promise<void> {
  await page.goto(path)
  await hydrated(page)
}

/** A new context on `device`, signed in through the form, on Today. */
export async function openSignedIn(browser: Browser, baseURL: string, device: keyof typeof VIEWPORTS, email: string, password: string):
  Promise<{ context: BrowserContext; page: Page }> {
  const p = await newPage(browser, baseURL, device)
  await signIn(p.page, email, password)
  await p.page.waitForURL((u) => u.pathname === '/')
  return p
}

/** Key a reading in on the number pad, as a gloved finger does, and save it; then wait for its tick unless told not to. */
export async function keyInReading(page: Page, value: string, opts: { waitSaved?: boolean } = {}): Promise<void> {
  const pad = page.getByTestId('number-pad')
  for (const ch of value) await pad.getByRole('button', { name: ch, exact: true }).click()
  await page.getByTestId('save-reading').click()
  if (opts.waitSaved !== false) await page.getByTestId('saved').filter({ hasText: `Saved ${value}` }).waitFor({ timeout: 5000 })
}
