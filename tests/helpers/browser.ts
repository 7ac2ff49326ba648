// playwright-core driving Debian's chromium (no downloaded browser). Flags keep chromium off the network.
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core'

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
  await page.getByLabel('E-mail').fill(email)
  await page.getByLabel('Password').fill(password)
  await page.getByRole('button', { name: 'Sign in' }).click()
}
