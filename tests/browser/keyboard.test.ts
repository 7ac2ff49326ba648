// Keyboard only, as with a scanner wedge and no mouse: the sizing flow (readings → sizes confirmed) and the
// scan flow (a wedge scan, then acknowledging its check) complete with Tab, Shift+Tab, Enter and digits,
// and every control reached shows where the focus is (WCAG 2.2 SC 2.1.1 Keyboard, SC 2.4.7 Focus Visible).
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { open, openSignedIn } from '../helpers/browser'
import { testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { closeSuite, openSuite, type Shelf } from '../helpers/suite'
import { createCase, gs1Scan } from '../helpers/cases'
import { signInRoles } from '../helpers/http'

const baseURL = inject('baseURL')
let browser: Browser
let f: TestFacility
let shelf: Shelf

beforeAll(async () => { ({ browser, f, shelf } = await openSuite()) })
afterAll(() => closeSuite(browser))

interface Focused { tag: string; test: string | null; text: string; ring: boolean }

/** What has the focus now, and whether it is drawn (an outline, or the ring our :focus-visible style draws). */
function focused(page: Page): Promise<Focused> {
  return page.evaluate(() => {
    const el = document.activeElement as HTMLElement | null
    if (!el || el === document.body) return { tag: 'body', test: null, text: '', ring: false }
    const s = getComputedStyle(el)
    const ring = (s.outlineStyle !== 'none' && parseFloat(s.outlineWidth) > 0) || (s.boxShadow !== 'none' && s.boxShadow !== '')
    return { tag: el.tagName.toLowerCase(), test: el.getAttribute('data-test'), text: (el.textContent ?? '').trim().replace(/\s+/g, ' ').slice(0, 60), ring }
  })
}

/** Press Tab until `want` has the focus; every stop on the way must show its focus. */
async function tabTo(page: Page, want: (f: Focused) => boolean, max = 80): Promise<Focused> {
  for (let i = 0; i < max; i++) {
    await page.keyboard.press('Tab')
    const f = await focused(page)
    if (f.tag !== 'body') expect(f.ring, `focus not visible on ${f.tag} "${f.text}" (${f.test})`).toBe(true)
    if (want(f)) return f
  }
  throw new Error('not reachable with Tab')
}

describe('keyboard only', () => {
  it('the circulator enters the readings and confirms the sizes without a mouse', async () => {
    const circ = (await signInRoles(baseURL, f, TEST_PASSWORD, ['circulator'])).circulator!
    const id = await createCase(circ, f, { procedure: 'short_nail', side: 'right' })
    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.circulator.email, TEST_PASSWORD)
    await open(page, `/cases/${id}`)

    for (const [heading, value] of [['Last reamer', '11.5'], ['Nail length', '205'], ['Neck-shaft angle', '131'], ['Head element reading', '95']] as const) {
      await page.getByRole('heading', { name: heading }).waitFor()
      if ((await focused(page)).test !== 'reading-input') await tabTo(page, (x) => x.test === 'reading-input')
      await page.keyboard.type(value)
      await page.keyboard.press('Enter')
      await page.getByTestId('saved').filter({ hasText: `Saved ${value}` }).waitFor()
    }
    const kinds = await testDb().selectFrom('readings').select('kind').where('case_id', '=', id).orderBy('id').execute()
    expect(kinds.map((k) => k.kind)).toEqual(['reamed_diameter', 'nail_length', 'native_angle', 'head_element_length'])

    // Sizes: the nail asks first that the aiming guide is set like it (a checkbox: Space), then Enter confirms
    await open(page, `/cases/${id}/sizes`)
    await tabTo(page, (x) => x.test === 'guide-ack')
    await page.keyboard.press('Space')
    expect(await page.getByTestId('guide-ack').isChecked()).toBe(true)
    const confirm = await tabTo(page, (x) => x.test === 'confirm-proposed')
    expect(confirm.text).toMatch(/^Confirm /)
    await page.keyboard.press('Enter')
    await expect.poll(async () => (await testDb().selectFrom('sizing_decisions').select('component').where('case_id', '=', id).execute()).map((d) => d.component), { timeout: 5000 })
      .toContain('nail')
    // and back again with Shift+Tab, still visibly focused
    await page.keyboard.press('Shift+Tab')
    expect((await focused(page)).ring).toBe(true)
    await context.close()
  })

  it('the scrub scans with the wedge and acknowledges the check without a mouse', async () => {
    const as = await signInRoles(baseURL, f, TEST_PASSWORD, ['circulator', 'scrub'])
    const id = await createCase(as.circulator!, f, { procedure: 'short_nail', side: 'right' })
    const nail = shelf.find((s) => s.kind === 'nail' && s.type === 'short' && s.d === 11 && s.len === 200)
    const { context, page } = await openSignedIn(browser, baseURL, 'phone', f.users.scrub.email, TEST_PASSWORD)
    await open(page, `/cases/${id}/implants`)

    // the scanner field has the focus when the page opens, as a wedge scanner needs; the scanner "types" and sends Enter
    expect((await focused(page)).test).toBe('wedge')
    await page.keyboard.type(gs1Scan(nail.gtin, { expiry: '2030-12-31', lot: `KB-${f.tag}`, serial: `KB-${f.tag}` }).replace(/\u001d/g, '\u001d'))
    await page.keyboard.press('Enter')
    const band = page.getByTestId('scan-band')
    await band.waitFor()
    // no size was confirmed for this case: the nail needs an acknowledgement ("check"), said in words
    await expect.poll(async () => band.getAttribute('data-result'), { timeout: 10_000 }).toBe('check')
    expect(await band.textContent()).toMatch(/\S/) // words, not only a colour
    const item = await testDb().selectFrom('case_items').select('id').where('case_id', '=', id).executeTakeFirstOrThrow()
    await tabTo(page, (x) => x.test === `ack-${item.id}`)
    await page.keyboard.press('Enter')
    await expect.poll(async () => (await testDb().selectFrom('case_items').select('acknowledged_at').where('id', '=', item.id).executeTakeFirstOrThrow()).acknowledged_at, { timeout: 5000 })
      .not.toBeNull()
    await context.close()
  })
})
