import { launchBrowser, newPage, signIn } from '../../tests/helpers/browser'
const [,, base, out, email, path, vp] = process.argv
const b = await launchBrowser()
const { page } = await newPage(b, base, (vp as any) || 'tablet')
if (email) { await signIn(page, email, 'isthmus-demo'); await page.waitForURL((u) => !u.pathname.startsWith('/login'), { timeout: 10000 }) }
await page.goto(path || '/login')
await page.waitForTimeout(1200)
await page.screenshot({ path: out, fullPage: true })
await b.close()
