import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { keyInReading, launchBrowser, open, openSignedIn } from '../helpers/browser'
import { closeTestDb, makeFacility, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { standardShelf } from '../helpers/catalog'
import { createCase } from '../helpers/cases'
import { clientFrom } from '../helpers/http'

const baseURL = inject('baseURL')
let browser: Browser
let f: TestFacility

beforeAll(async () => {
  browser = await launchBrowser()
  f = await makeFacility()
  await standardShelf(f)
})
afterAll(async () => {
  await browser?.close()
  await closeTestDb()
})

describe('readings on the tablet', () => {
  it('a circulator enters a full set of readings and sees the recommendation with its warning', async () => {
    const api = clientFrom(baseURL)
    await api.login(f.users.circulator.email, TEST_PASSWORD)
    const id = await createCase(api, f, { procedure: 'short_nail', side: 'right' })

    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.circulator.email, TEST_PASSWORD)
    await open(page, `/cases/${id}`)
    await page.getByRole('heading', { name: 'Last reamer' }).waitFor()

    // a value out of range says what to fix, beside the field
    await keyInReading(page, '25', { waitSaved: false })
    expect(await page.getByTestId('reading-error').textContent()).toBe('Last reamer must be between 7 mm and 20 mm.')
    await page.getByRole('button', { name: 'Delete last digit' }).click()
    await page.getByRole('button', { name: 'Delete last digit' }).click()

    // a wide canal with a short nail: 16.5 − 1.0 = 15.5 → the largest stocked 12 mm, and a caution (Mahmoud 2025)
    await keyInReading(page, '16.5')
    await page.getByRole('heading', { name: 'Nail length' }).waitFor()
    await keyInReading(page, '205')
    await page.getByRole('heading', { name: 'Neck-shaft angle' }).waitFor()
    await keyInReading(page, '128')
    await page.getByRole('heading', { name: 'Head element reading' }).waitFor()

    // the panel follows the step: back on a nail reading it shows the nail
    await page.getByTestId('step-native_angle:0').click()
    const nail = page.getByTestId('proposal-nail-0')
    // the recommendation beside the readings: 12 × 200 mm, 130° (unsided short nail)
    expect(await nail.getByTestId('proposed-size').textContent()).toContain('12 × 200 mm, 130°')
    expect(await nail.getByTestId('location').textContent()).toContain('Core store')
    const warning = page.getByTestId('proposal-nail-0').locator('[data-code="short_nail_wide_canal"]')
    await warning.waitFor()
    expect(await warning.textContent()).toMatch(/15/)

    await page.getByTestId('step-head_element_length:0').click()
    await keyInReading(page, '97')
    await page.getByRole('heading', { name: 'Planned compression' }).waitFor()
    await page.getByRole('group', { name: 'Common compression choices' }).getByRole('button', { name: '5 mm' }).click()
    await page.getByTestId('save-reading').click()
    await page.getByRole('heading', { name: 'Distal screw 1 depth' }).waitFor()
    await page.getByTestId('step-head_compression:0').click()
    // 97 − 5 = 92 → 90 mm, never rounded up (Wheeless)
    expect(await page.getByTestId('proposal-head_element-0').getByTestId('proposed-size').textContent()).toContain('90 mm')
    await page.getByTestId('step-distal_depth:1').click()
    await keyInReading(page, '39')
    await page.getByTestId('step-distal_depth:1').click()
    await page.getByTestId('proposal-distal_screw-1').getByTestId('proposed-size').waitFor()
    expect(await page.getByTestId('proposal-distal_screw-1').getByTestId('proposed-size').textContent()).toContain('40 mm')

    // the standing caution is on the screen where the decision is made
    expect(await page.getByTestId('caution').first().textContent()).toMatch(/surgeon decides/)

    // a correction keeps the first value in the history
    await page.getByTestId('step-nail_length:0').click()
    await keyInReading(page, '180')
    await page.getByTestId('step-nail_length:0').click()
    const hist = await page.getByTestId('reading-history').textContent()
    expect(hist).toMatch(/205 mm.*corrected/)
    expect(hist).toMatch(/180 mm/)

    // the sizes step shows the schematic labelled with the sizes, and confirming the nail needs the guide check
    await page.getByTestId('to-sizes').click()
    await page.getByTestId('schematic').waitFor()
    expect(await page.getByTestId('schematic').textContent()).toContain('Nail 12 × 180 mm, 130°')
    await page.getByTestId('confirm-nail-0').getByTestId('confirm-proposed').click()
    await page.getByText('Confirm that the aiming guide is set').waitFor()
    await page.getByTestId('guide-ack').check()
    await page.getByTestId('confirm-nail-0').getByTestId('confirm-proposed').click()
    await page.getByTestId('guide-recorded').waitFor()
    await context.close()
  })
})
