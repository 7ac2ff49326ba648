import { existsSync, readFileSync } from 'node:fs'
import { createHash } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { newPage, open, openSignedIn, signIn } from '../helpers/browser'
import { testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { closeSuite, openSuite, type Shelf } from '../helpers/suite'
import { confirm, createCase, gs1Scan, reading, scan } from '../helpers/cases'
import { clientFrom } from '../helpers/http'

const baseURL = inject('baseURL')
let browser: Browser
let f: TestFacility
let shelf: Shelf

beforeAll(async () => { ({ browser, f, shelf } = await openSuite()) })
afterAll(() => closeSuite(browser))

describe('the surgeon signs on the tablet', () => {
  it('closes, signs with the password, downloads the signed PDF, and signs an addendum as version 2', async () => {
    const circ = clientFrom(baseURL)
    await circ.login(f.users.circulator.email, TEST_PASSWORD)
    const surgeonApi = clientFrom(baseURL)
    await surgeonApi.login(f.users.surgeon.email, TEST_PASSWORD)
    const id = await createCase(circ, f)
    await reading(circ, id, 'head_element_length', 92)
    const s = (await circ.get(`/api/cases/${id}/sizing`)).body
    await confirm(surgeonApi, id, 'head_element', s.headElement.ideal.id)
    const he = shelf.rows.find((r) => r.id === s.headElement.ideal.id)!
    expect((await scan(circ, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: 'SIGN-LOT' }))).status).toBe(201)

    // the circulator closes the log from the Record step
    const c = await newPage(browser, baseURL, 'tablet')
    await signIn(c.page, f.users.circulator.email, TEST_PASSWORD)
    await c.page.waitForURL((u) => u.pathname === '/')
    await open(c.page, `/cases/${id}/record`)
    await c.page.getByTestId('ready').waitFor()
    await c.page.getByTestId('close-case').click()
    await c.page.getByTestId('close-confirm').click()
    await c.page.getByTestId('sign').waitFor()
    await c.context.close()

    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.surgeon.email, TEST_PASSWORD)
    await open(page, `/cases/${id}/record`)
    await page.getByTestId('sign-form').waitFor()
    // a wrong password is refused on the form
    await page.getByTestId('sign-password').fill('not-the-password')
    await page.getByTestId('sign-submit').click()
    await page.getByText('The password is not right.').waitFor()
    await page.getByTestId('sign-password').fill(TEST_PASSWORD)
    await page.getByTestId('sign-submit').click()
    await page.getByTestId('version-1').waitFor({ timeout: 15_000 })
    expect(await page.getByTestId('case-status').first().textContent()).toContain('Signed')

    const [download] = await Promise.all([page.waitForEvent('download'), page.getByTestId('download-1').click()])
    const file = await download.path()
    expect(file && existsSync(file)).toBe(true)
    const bytes = readFileSync(file!)
    expect(bytes.subarray(0, 5).toString()).toBe('%PDF-')
    const stored = await testDb().selectFrom('record_versions').select('pdf_hash').where('case_id', '=', id).executeTakeFirstOrThrow()
    expect(createHash('sha256').update(bytes).digest('hex')).toBe(stored.pdf_hash)

    // a correction: an addendum signed again becomes version 2; version 1 stays as it was
    await page.getByText('Add an addendum (correction)').click()
    const form = page.getByTestId('addendum-form')
    await form.getByLabel('Why a correction is needed').fill('Head element lot misread')
    await form.getByLabel('The correction, as it should read').fill('Head element lot is HE-LOT-2B')
    await form.getByLabel('Your password').fill(TEST_PASSWORD)
    await form.getByRole('button', { name: 'Sign addendum' }).click()
    await page.getByTestId('version-2').waitFor({ timeout: 15_000 })
    expect(await page.getByTestId('version-2').textContent()).toContain('Head element lot misread')
    const [again] = await Promise.all([page.waitForEvent('download'), page.getByTestId('download-1').click()])
    expect(createHash('sha256').update(readFileSync((await again.path())!)).digest('hex')).toBe(stored.pdf_hash)
    expect(await testDb().selectFrom('record_versions').select('version').where('case_id', '=', id).orderBy('version').execute()).toEqual([{ version: 1 }, { version: 2 }])
    await context.close()
  })
})
