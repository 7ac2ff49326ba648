import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { VIEWPORTS, launchBrowser, open, openSignedIn } from '../helpers/browser'
import { closeTestDb, makeFacility, tag, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { standardShelf } from '../helpers/catalog'
import { createCase, gs1Scan, reading, scan } from '../helpers/cases'
import { clientFrom } from '../helpers/http'

const baseURL = inject('baseURL')
let browser: Browser
let f: TestFacility
let he: Awaited<ReturnType<typeof standardShelf>>['rows'][number]
const LOT = `BR${randomUUID().slice(0, 6)}`.toUpperCase()
// invented patients: two under the facility's surgeon, one under a second surgeon
const PATIENTS = [
  { mrn: `M-${tag()}`, familyName: 'Marlow', givenName: 'Ines' },
  { mrn: `M-${tag()}`, familyName: 'Okafor-Lind', givenName: 'Tomas' },
  { mrn: `M-${tag()}`, familyName: 'Vey', givenName: 'Saoirse' },
]

beforeAll(async () => {
  browser = await launchBrowser()
  f = await makeFacility()
  const shelf = await standardShelf(f)
  he = shelf.rows.find((r) => r.spec.kind === 'head_element' && r.spec.len === 90)!
  await testDb().updateTable('stock_lines').set({ lot: LOT, on_hand: 20 }).where('id', '=', he.stockLineId).execute()
  const hash = (await testDb().selectFrom('users').select('password_hash').where('id', '=', f.users.surgeon.id).executeTakeFirstOrThrow()).password_hash
  const second = await testDb().insertInto('users').values({ email: `surgeon-b-${f.tag}@test.isthmus.test`, name: `Second Surgeon ${f.tag}`, role: 'surgeon', facility_id: f.facilityId, password_hash: hash }).returning('id').executeTakeFirstOrThrow()

  const circ = clientFrom(baseURL)
  await circ.login(f.users.circulator.email, TEST_PASSWORD)
  const scrub = clientFrom(baseURL)
  await scrub.login(f.users.scrub.email, TEST_PASSWORD)
  for (const [i, p] of PATIENTS.entries()) {
    const surgeonId = i < 2 ? f.users.surgeon.id : second.id
    const id = await createCase(circ, f, { surgeonId, patient: { ...p, birthDate: '1944-05-17', sex: 'unknown' } })
    await reading(circ, id, 'head_element_length', 92)
    expect((await scan(scrub, id, gs1Scan(he.gtin, { expiry: '2030-12-31', lot: LOT, serial: `${LOT}-${i}` }))).status).toBe(201)
  }
})
afterAll(async () => {
  await browser?.close()
  await closeTestDb()
})

async function shoot(page: Page, name: string) {
  for (const v of ['desktop', 'tablet'] as const) {
    await page.setViewportSize(VIEWPORTS[v])
    // from the top, so that the sticky header is not pictured over the middle of the page
    await page.evaluate(() => window.scrollTo(0, 0))
    await page.screenshot({ path: `/tmp/${name}-${VIEWPORTS[v].width}.png`, fullPage: true })
  }
  await page.setViewportSize(VIEWPORTS.desktop)
}

describe('the coordinator traces a lot and runs its recall', () => {
  it('searches the lot, starts a recall, imports its CSV after a preview, follows each patient up and closes it', async () => {
    const { context, page } = await openSignedIn(browser, baseURL, 'desktop', f.users.coordinator.email, TEST_PASSWORD)

    // --- Trace: every patient with the lot
    await open(page, '/trace')
    await page.getByTestId('trace-start').waitFor()
    expect(await page.getByTestId('logged-note').textContent()).toContain('access log')
    // an empty search is answered beside the field, not with an error page
    await page.getByTestId('trace-submit').click()
    expect(await page.getByTestId('error-lot').textContent()).toContain('Give a lot')
    await page.getByTestId('trace-lot').fill(LOT)
    await page.getByTestId('trace-submit').click()
    await page.getByTestId('trace-table').waitFor()
    expect(await page.getByTestId('trace-count').textContent()).toBe('3 patients, 3 implants')
    expect(await page.getByTestId('trace-facility').textContent()).toBe(`all at Test facility ${f.tag}`)
    const mrns = await page.getByTestId('row-mrn').allTextContents()
    for (const p of PATIENTS) expect(mrns).toContain(`MRN ${p.mrn}`)
    expect(new URL(page.url()).searchParams.get('lot')).toBe(LOT)
    // the search is in the address: a reload shows the same results
    await open(page, page.url())
    expect(await page.getByTestId('trace-count').textContent()).toBe('3 patients, 3 implants')
    expect(await page.getByTestId('trace-lot').inputValue()).toBe(LOT)
    // the export carries the same query; each row opens its case record
    expect(await page.getByTestId('trace-export').getAttribute('href')).toBe(`/api/trace/export.csv?lot=${LOT}`)
    expect(await page.getByTestId('row-record').first().getAttribute('href')).toMatch(/^\/cases\/\d+\/record$/)
    // sorting by patient: the header says so and the rows follow
    await page.getByTestId('sort-mrn').click()
    await page.locator('th[aria-sort="ascending"]').getByTestId('sort-mrn').waitFor()
    await page.waitForFunction((want) => [...document.querySelectorAll('[data-test="row-mrn"]')].map((e) => e.textContent).join('|') === want,
      [...PATIENTS].map((p) => `MRN ${p.mrn}`).sort().join('|'))
    await shoot(page, 'trace')

    // --- Recalls: start one from the notice
    await open(page, '/recalls')
    const title = `Head element coating ${f.tag}`
    await page.getByLabel('Title', { exact: true }).fill(title)
    await page.getByLabel('Notice reference').fill(`N-${f.tag}`)
    await page.getByTestId('class-II').click()
    await page.getByLabel('Maker', { exact: true }).fill('Fernhollow Medical (demo)')
    await page.getByLabel('Date received').fill('2026-11-20')
    await page.getByTestId('recall-start').click()
    await page.waitForURL(/\/recalls\/\d+$/)
    await page.getByTestId('items-empty').waitFor()
    await page.locator('body[data-hydrated="true"]').waitFor()
    expect(await page.getByTestId('recall-title').textContent()).toBe(title)
    expect(await page.getByTestId('recall-class').textContent()).toBe('II')
    expect(await page.getByTestId('recall-status').textContent()).toContain('Open')

    // --- a CSV with one bad row: reported by number and reason, and the import refuses
    const badGtin = he.gtin.slice(0, 13) + ((Number(he.gtin[13]) + 1) % 10)
    await page.getByTestId('csv-file').setInputFiles({ name: 'notice-bad.csv', mimeType: 'text/csv', buffer: Buffer.from(`gtin,lot\n${he.gtin},${LOT}\n${badGtin},L1\n`) })
    // the reason appears once the server's dry run has answered
    await page.getByTestId('csv-why-not').waitFor()
    const badRows = page.getByTestId('csv-error-row')
    expect(await badRows.count()).toBe(1)
    expect(await badRows.first().getAttribute('data-row')).toBe('2')
    expect(await badRows.first().textContent()).toContain('check digit')
    const importButton = page.getByTestId('csv-import')
    expect(await importButton.isDisabled()).toBe(true)
    expect(await importButton.textContent()).toContain('Cannot import: 1 problem to fix')
    expect(await page.getByTestId('csv-why-not').textContent()).toContain('imported whole or not at all')
    await page.getByTestId('recall-items').screenshot({ path: '/tmp/recall-csv-bad.png' })
    expect((await testDb().selectFrom('recall_items').innerJoin('recalls', 'recalls.id', 'recall_items.recall_id').select('recall_items.id').where('recalls.title', '=', title).execute()).length).toBe(0)

    // --- the corrected file: preview, then import
    await page.getByTestId('csv-file').setInputFiles({ name: 'notice.csv', mimeType: 'text/csv', buffer: Buffer.from(`gtin,lot\n${he.gtin},${LOT}\n`) })
    await page.getByRole('button', { name: 'Import 1 row', exact: true }).waitFor()
    expect(await page.getByTestId('csv-summary').textContent()).toContain('1 good row')
    expect(await page.getByTestId('csv-error-row').count()).toBe(0)
    await importButton.click()
    await page.getByTestId('csv-imported').waitFor()
    expect(await page.getByTestId('csv-matched').textContent()).toContain('Matched 3 new patients and 1 new shelf line')

    // affected patients, grouped by surgeon, and the shelf line
    await page.getByTestId('recall-patient').nth(2).waitFor()
    expect(await page.getByTestId('surgeon-group').count()).toBe(2)
    for (const p of PATIENTS) expect(await page.locator(`[data-test="recall-patient"][data-mrn="${p.mrn}"]`).textContent()).toContain(`${p.familyName}, ${p.givenName}`)
    const line = page.getByTestId('stock-line')
    expect(await line.count()).toBe(1)
    expect(await line.textContent()).toContain(LOT)
    expect(await line.getAttribute('data-status')).toBe('to_pull')
    expect(await page.getByTestId('progress-text').textContent()).toBe('0 of 3 patients closed · 0 of 1 shelf line pulled')
    await shoot(page, 'recall')

    // e-mail the surgeons, after saying so in words
    await page.getByTestId('notify').click()
    expect(await page.getByTestId('notify-confirm').textContent()).toContain('each of the 2 surgeons')
    await page.getByTestId('notify-confirm-yes').click()
    expect(await page.getByTestId('notified').textContent()).toContain('2 surgeons e-mailed')
    await page.locator('[data-test="recall-patient"][data-status="open"]').first().waitFor({ state: 'detached' })

    // closing too early: the server says what is still open
    await page.getByTestId('close').click()
    await page.getByTestId('close-confirm').click()
    expect(await page.getByTestId('close-error').textContent()).toContain('3 patients are not closed yet. 1 shelf line is not pulled yet.')

    // each patient closed, with a note for the first; the pack pulled
    const first = page.locator(`[data-test="recall-patient"][data-mrn="${PATIENTS[0]!.mrn}"]`)
    await first.getByTestId('patient-note').fill('Seen in clinic, no revision')
    for (const p of PATIENTS) {
      const row = page.locator(`[data-test="recall-patient"][data-mrn="${p.mrn}"]`)
      await row.getByTestId('status-closed').click()
      await page.locator(`[data-test="recall-patient"][data-mrn="${p.mrn}"][data-status="closed"]`).waitFor()
    }
    expect(await first.getByTestId('patient-changed').textContent()).toContain(`Last changed by ${f.users.coordinator.name}`)
    expect(await first.getByTestId('patient-note').inputValue()).toBe('Seen in clinic, no revision')
    expect(await first.getByTestId('status-closed').getAttribute('aria-checked')).toBe('true')
    await line.getByTestId('stock-pulled').click()
    await page.locator('[data-test="stock-line"][data-status="pulled"]').waitFor()
    expect(await page.getByTestId('progress-text').textContent()).toBe('3 of 3 patients closed · 1 of 1 shelf line pulled')

    // close it, confirmed in words
    await page.getByTestId('close').click()
    await page.getByTestId('recall-close').getByText('can no longer be changed').waitFor()
    await page.getByTestId('close-confirm').click()
    await page.getByTestId('closed-note').waitFor()
    expect(await page.getByTestId('recall-status').getAttribute('data-status')).toBe('closed')
    expect(await page.getByTestId('recall-status').textContent()).toContain('Closed')
    // a closed recall shows each status in words, with no buttons left to press
    expect(await page.getByTestId('status-closed').count()).toBe(0)
    expect(await page.getByTestId('status-final').allTextContents()).toEqual(['Closed', 'Closed', 'Closed'].map((w) => expect.stringContaining(w)))
    expect(await first.getByTestId('patient-note-text').textContent()).toBe('Seen in clinic, no revision')
    expect(await line.getByTestId('stock-final').textContent()).toContain('Pulled')
    await page.evaluate(() => window.scrollTo(0, 0))
    await page.screenshot({ path: '/tmp/recall-closed-1440.png', fullPage: true })

    // the list shows it closed with its progress
    await open(page, '/recalls')
    const card = page.locator('[data-test="recall-list"] a', { hasText: title })
    expect(await card.getByTestId('recall-status').textContent()).toContain('Closed')
    expect(await card.textContent()).toContain('3 of 3')
    await page.screenshot({ path: '/tmp/recalls-1440.png', fullPage: true })
    await context.close()
  }, 120_000)

  it('a surgeon tracing the same lot sees only their own patients, without the surgeon picker', async () => {
    const { context, page } = await openSignedIn(browser, baseURL, 'desktop', f.users.surgeon.email, TEST_PASSWORD)
    await open(page, `/trace?lot=${LOT}`)
    expect(await page.getByTestId('trace-count').textContent()).toBe('2 patients, 2 implants')
    expect((await page.getByTestId('row-mrn').allTextContents()).sort()).toEqual([`MRN ${PATIENTS[0]!.mrn}`, `MRN ${PATIENTS[1]!.mrn}`].sort())
    expect(await page.getByTestId('trace-surgeon').count()).toBe(0)
    expect(await page.getByTestId('logged-note').textContent()).toContain('only your own patients')
    await context.close()
  })
})
