// The set-up most browser test files share: one chromium, a fresh facility of their own with the standard shelf.
import type { Browser } from 'playwright-core'
import { launchBrowser } from './browser'
import { closeTestDb, makeFacility, type TestFacility } from './db'
import { standardShelf } from './catalog'

export type Shelf = Awaited<ReturnType<typeof standardShelf>>

export async function openSuite(): Promise<{ browser: Browser; f: TestFacility; shelf: Shelf }> {
  const browser = await launchBrowser()
  const f = await makeFacility()
  return { browser, f, shelf: await standardShelf(f) }
}

export async function closeSuite(browser: Browser | undefined): Promise<void> {
  await browser?.close()
  await closeTestDb()
}
