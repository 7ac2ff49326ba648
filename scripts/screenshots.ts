/**
 * The README's screenshots (docs/screenshots/*.png), made again from the demo: a fresh demo database,
 * the built server, one demo case taken through readings, sizes and scans by the API as the team would,
 * then each main screen photographed in chromium at the size of the device its user holds.
 *
 *   npm run screenshots          (needs a build: npx nuxt build; uses the local PostgreSQL of scripts/db.sh)
 */
import { execFileSync } from 'node:child_process'
import { mkdirSync } from 'node:fs'
import path from 'node:path'
import { randomBytes, randomUUID } from 'node:crypto'
import { createDb } from '../db/connection'
import { launchBrowser, newPage, open, signIn, type VIEWPORTS } from '../tests/helpers/browser'
import { startServer } from '../tests/helpers/server-setup'
import { Client } from '../tests/helpers/http'
import { gs1Scan } from '../tests/helpers/cases'

const root = path.resolve(import.meta.dirname, '..')
const out = path.join(root, 'docs/screenshots')
const DB = 'isthmus_screens'
const url = `postgres://postgres@127.0.0.1:${process.env.PGPORT_LOCAL ?? 54329}/${DB}`
const PASSWORD = 'isthmus-demo'
const email = (role: string) => `${role}@demo.isthmus.test`

function sh(cmd: string, args: string[], env: Record<string, string> = {}) {
  execFileSync(cmd, args, { cwd: root, stdio: 'inherit', env: { ...process.env, ...env } })
}

async function main() {
  sh('bash', ['scripts/db.sh', 'start'])
  sh('bash', ['scripts/db.sh', 'createdb', DB, '--fresh'])
  sh('npx', ['tsx', 'db/migrate.ts'], { DATABASE_URL: url })
  sh('npx', ['tsx', 'db/seed-demo.ts'], { DATABASE_URL: url })
  const server = await startServer({ DATABASE_URL: url, NUXT_SESSION_PASSWORD: randomBytes(24).toString('hex'), NUXT_TRUST_PROXY: '0' })
  const db = createDb(url)
  try {
    const as = async (role: string) => {
      const c = new Client(server.url)
      await c.login(email(role), PASSWORD)
      return c
    }
    const circ = await as('circulator')
    const scrub = await as('scrub')
    // the short-nail case at 11:30 in theatre 3 (db/seed-demo.ts)
    const row = await db.selectFrom('cases as c').innerJoin('patients as p', 'p.id', 'c.patient_id').select('c.id').where('p.mrn', '=', 'D-100457').executeTakeFirstOrThrow()
    const id = row.id
    const post = (c: Client, p: string, body: Record<string, unknown>) => c.post(`/api/cases/${id}/${p}`, { clientKey: randomUUID(), ...body })
    for (const [kind, value, slot] of [['reamed_diameter', 11.5, 0], ['nail_length', 205, 0], ['native_angle', 131, 0], ['head_element_length', 95, 0], ['head_compression', 5, 0], ['distal_depth', 38, 1]] as const) {
      await post(circ, 'readings', { kind, value, slot })
    }
    const sizing = (await circ.get(`/api/cases/${id}/sizing`)).body
    await post(circ, 'decisions', { component: 'nail', chosenItemId: sizing.nail.ideal.id, guideAcknowledged: true })
    await post(circ, 'decisions', { component: 'head_element', chosenItemId: sizing.headElement.ideal.id })
    const items = await db.selectFrom('catalog_items').select(['id', 'gtin']).where('id', 'in', [sizing.nail.ideal.id, sizing.headElement.ideal.id]).execute()
    const lots = await db.selectFrom('stock_lines').select(['item_id', 'lot', 'expiry']).where('item_id', 'in', items.map((i) => i.id)).execute()
    for (const it of items) {
      const line = lots.find((l) => l.item_id === it.id)!
      const r = await post(scrub, 'items', { scan: gs1Scan(it.gtin!, { expiry: String(line.expiry), lot: line.lot ?? undefined, serial: it.id === sizing.nail.ideal.id ? 'DEMO0001' : undefined }), source: 'wedge', disposition: 'implanted' })
      // the aiming guide checked against the nail, as the circulator acknowledges it
      if (r.body?.result === 'check') await circ.post(`/api/cases/${id}/items/${r.body.item.id}/acknowledge`, {})
    }

    const nailLot = lots.find((l) => l.item_id === sizing.nail.ideal.id)!.lot!

    mkdirSync(out, { recursive: true })
    const browser = await launchBrowser()
    {
      // the sign-in page as the circulator first sees it on the tablet, before anyone signs in
      const { context, page } = await newPage(browser, server.url, 'tablet')
      await open(page, '/login')
      await page.waitForLoadState('networkidle')
      await page.screenshot({ path: path.join(out, 'signin-tablet.png') })
      console.log('docs/screenshots/signin-tablet.png')
      await context.close()
    }
    const shots: [string, string, keyof typeof VIEWPORTS, string][] = [
      ['today-tablet', 'circulator', 'tablet', '/'],
      ['readings-tablet', 'circulator', 'tablet', `/cases/${id}`],
      ['sizes-tablet', 'circulator', 'tablet', `/cases/${id}/sizes`],
      ['implants-phone', 'scrub', 'phone', `/cases/${id}/implants`],
      ['record-desktop', 'surgeon', 'desktop', `/cases/${id}/record`],
      ['trace-desktop', 'coordinator', 'desktop', `/trace?lot=${encodeURIComponent(nailLot)}`],
      ['shelf-tablet', 'circulator', 'tablet', '/shelf'],
    ]
    for (const [name, role, device, where] of shots) {
      // the log is closed after the team's screens are taken, so the surgeon's Record step shows the signing form
      if (name === 'record-desktop') await circ.post(`/api/cases/${id}/close`)
      const { context, page } = await newPage(browser, server.url, device)
      await signIn(page, email(role), PASSWORD)
      await page.waitForURL((u) => u.pathname === '/')
      await open(page, where)
      await page.waitForLoadState('networkidle')
      await page.screenshot({ path: path.join(out, `${name}.png`) })
      console.log(`docs/screenshots/${name}.png`)
      await context.close()
    }
    await browser.close()
  } finally {
    await db.destroy()
    await server.stop()
  }
}

main().catch((e) => {
  console.error(e)
  process.exit(1)
})
