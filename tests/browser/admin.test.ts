import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { launchBrowser, open, openSignedIn } from '../helpers/browser'
import { closeTestDb, makeFacility, tag, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { clientFrom } from '../helpers/http'

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

describe('the admin at the desk', () => {
  it('adds a person through the form (a weak password is refused beside the field first), then deactivates them', async () => {
    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.admin.email, TEST_PASSWORD)
    await open(page, '/people')
    await page.getByTestId('people-table').waitFor()

    const t = tag()
    const name = `Juniper Vale ${t}`
    const email = `juniper-${t}@test.isthmus.test`
    await page.getByTestId('add-person').click()
    const form = page.getByTestId('person-form')
    await form.getByLabel('Full name').fill(name)
    await form.getByLabel('E-mail').fill(email)
    await form.getByRole('radio', { name: 'Circulator' }).check()
    await form.getByLabel('Initial password').fill('too-short')
    await page.getByTestId('person-submit').click()
    // the policy message sits in the password field's own block, named by the input
    const pw = form.getByLabel('Initial password')
    await expect.poll(() => pw.getAttribute('aria-invalid')).toBe('true')
    const describedBy = (await pw.getAttribute('aria-describedby'))!
    expect(await page.locator(`[id="${describedBy}"]`).textContent()).toBe('Use at least 12 characters.')
    expect(await testDb().selectFrom('users').select('id').where('email', '=', email).executeTakeFirst()).toBeUndefined()

    await pw.fill('saffron-window-orbit-58')
    await page.getByTestId('person-submit').click()
    await page.getByTestId('people-notice').getByText(`${name} was added as Circulator`).waitFor()
    const row = await testDb().selectFrom('users').select(['id', 'role', 'active', 'facility_id']).where('email', '=', email).executeTakeFirstOrThrow()
    expect(row).toMatchObject({ role: 'circulator', active: true, facility_id: f.facilityId })
    await page.getByTestId(`person-${row.id}`).waitFor()

    // the new person is at work on another device
    const device = clientFrom(baseURL)
    await device.login(email, 'saffron-window-orbit-58')
    expect((await device.get('/api/cases')).status).toBe(200)

    // deactivating asks first, in words, and names the person
    await page.getByRole('button', { name: `Manage ${name}` }).click()
    const panel = page.getByTestId('person-panel')
    await panel.getByTestId('deactivate').click()
    await panel.getByText(`Deactivate ${name}? They are signed out within seconds`).waitFor()
    await panel.getByRole('button', { name: 'Keep active' }).click()
    expect((await testDb().selectFrom('users').select('active').where('id', '=', row.id).executeTakeFirstOrThrow()).active).toBe(true)
    await panel.getByTestId('deactivate').click()
    await panel.getByTestId('deactivate-confirm').click()
    await page.getByTestId('people-notice').getByText(`${name} is deactivated`).waitFor()
    await page.getByTestId(`person-${row.id}`).getByText('Deactivated').waitFor()
    expect((await testDb().selectFrom('users').select('active').where('id', '=', row.id).executeTakeFirstOrThrow()).active).toBe(false)

    // and the other device is turned away within seconds
    await expect.poll(async () => (await device.get('/api/cases')).status, { timeout: 7000, interval: 250 }).toBe(401)
    await context.close()
  })

  it('changes the nail clearance and sees version 2 in the history', async () => {
    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.admin.email, TEST_PASSWORD)
    await open(page, '/settings')
    await page.getByTestId('profile-version-1').waitFor()
    expect(await page.getByTestId('profile-version-2').count()).toBe(0)

    const clearance = page.getByLabel('Nail clearance (mm)')
    await clearance.fill('2')
    await page.getByTestId('settings-save').click()
    await page.getByText('Nail clearance must be from 0.5 to 1.5 mm.').waitFor()

    await clearance.fill('1.5')
    await page.getByTestId('new-version-note').getByText('Saving makes version 2').waitFor()
    await page.getByTestId('settings-save').click()
    await page.getByTestId('settings-saved').getByText('Version 2 of the sizing rules is used for new cases').waitFor()
    const v2 = page.getByTestId('profile-version-2')
    await v2.waitFor()
    expect(await v2.textContent()).toContain('1.5 mm')
    expect(await v2.textContent()).toContain(f.users.admin.name)
    expect(await v2.textContent()).toContain('in use')
    expect(await page.getByTestId('profile-version-1').textContent()).toContain('1.0 mm')

    const rows = await testDb().selectFrom('rule_profiles').select(['version', 'nail_clearance_mm']).where('facility_id', '=', f.facilityId).orderBy('version').execute()
    expect(rows.map((r) => [r.version, Number(r.nail_clearance_mm)])).toEqual([[1, 1], [2, 1.5]])
    await context.close()
  })

  it('adds a theatre under Settings, and the new-case form offers it', async () => {
    const { context, page } = await openSignedIn(browser, baseURL, 'tablet', f.users.admin.email, TEST_PASSWORD)
    await open(page, '/settings')
    await page.getByTestId('theatres').waitFor()
    await page.getByTestId('theatre-add').click()
    await page.getByTestId('f-code').fill('OR 7')
    await page.getByTestId('f-name').fill('Theatre 7')
    await page.getByTestId('theatre-save').click()
    await page.getByTestId('theatre-form').getByText(/A code is 1 to 10 letters/).waitFor()
    await page.getByTestId('f-code').fill('OR7')
    await page.getByTestId('theatre-save').click()
    await page.getByTestId('theatre-notice').filter({ hasText: 'Saved Theatre 7' }).waitFor()
    await page.getByTestId('theatres').locator('li', { hasText: 'Theatre 7' }).waitFor()
    await page.getByTestId('theatres').screenshot({ path: '/tmp/settings-theatres.png' })
    await context.close()
    const row = await testDb().selectFrom('theatres').select(['code', 'active']).where('facility_id', '=', f.facilityId).where('name', '=', 'Theatre 7').executeTakeFirstOrThrow()
    expect(row).toEqual({ code: 'OR7', active: true })
    const c = await openSignedIn(browser, baseURL, 'tablet', f.users.circulator.email, TEST_PASSWORD)
    await open(c.page, '/cases/new')
    await c.page.locator('option', { hasText: 'Theatre 7' }).waitFor({ state: 'attached' })
    await c.context.close()
  })
})
