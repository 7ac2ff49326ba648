// What a tablet has to download and run for the scan and sizing pages: the JS each page loads (gzip
// bytes of the build's own files) and the time until the app has hydrated, in chromium with its CPU
// slowed 4× through the DevTools protocol.
import { existsSync, readFileSync, statSync } from 'node:fs'
import path from 'node:path'
import { brotliCompressSync, gzipSync } from 'node:zlib'
import { pathToFileURL } from 'node:url'
import type { Browser } from 'playwright-core'
import { launchBrowser, signIn } from '../../tests/helpers/browser'
import { median, OUTPUT } from './env'

export interface Chunk { file: string; gzipBytes: number; holds: string[]; kind: 'eager' | 'lazy' | 'prefetch' }
export interface PageFigures {
  path: string
  /** the page's own JS: what its route needs (eager) and what it imports on its own behalf (lazy) */
  js: { files: number; rawBytes: number; gzipBytes: number; eagerGzipBytes: number; lazyGzipBytes: number; brotliBytes: number | null; chunks: Chunk[] }
  /** chunks of other steps that Nuxt prefetched once the page was idle (their links are on screen) */
  prefetched: { files: number; gzipBytes: number; chunks: Chunk[] }
  classifiedBy: 'build manifest' | 'none (manifest not readable: all loaded JS counted)'
  css: { files: number; gzipBytes: number }
  /** ms from navigation start until body[data-hydrated="true"], per load, cold cache, CPU 4× slower */
  hydratedMs: number[]
  hydratedMedianMs: number
  /** the same on reloads with a warm cache */
  warmHydratedMedianMs: number
}

const PUBLIC = path.join(OUTPUT, 'public')

/** gzip size as served: the build's precompressed .gz when it has one, else gzip -9 of the file. */
function sizes(urlPath: string) {
  const file = path.join(PUBLIC, decodeURIComponent(urlPath))
  if (!existsSync(file)) return null
  const raw = statSync(file).size
  const gz = existsSync(`${file}.gz`) ? statSync(`${file}.gz`).size : gzipSync(readFileSync(file), { level: 9 }).length
  // small files have no precompressed .br in the build; compress them here so the sum is complete
  const br = existsSync(`${file}.br`) ? statSync(`${file}.br`).size : brotliCompressSync(readFileSync(file)).length
  return { raw, gz, br }
}

// What a chunk holds, told by strings the libraries leave in minified code (chunk names are hashes).
const MARKERS: [string, RegExp][] = [
  ['@zxing barcode decoder', /ReedSolomon|NotFoundException/],
  ['Nuxt + Vue runtime', /useNuxtApp|__NUXT__|nuxt-app/],
  ['pinia', /pinia/],
  ['zod', /ZodError/],
  ['decimal.js', /DecimalError/],
  ['vee-validate', /vee-validate/],
  ['chart.js', /Chart\.js|chartjs/],
  ['papaparse', /papaparse|Papa\.parse/],
]
function holds(urlPath: string): string[] {
  try {
    const text = readFileSync(path.join(PUBLIC, decodeURIComponent(urlPath)), 'utf8')
    return MARKERS.filter(([, re]) => re.test(text)).map(([n]) => n)
  } catch {
    return []
  }
}

interface ManifestEntry { file: string; src?: string; imports?: string[]; dynamicImports?: string[] }
interface Manifest { byKey: Map<string, ManifestEntry>; byFile: Map<string, string>; entry: string[] }

/** The client build manifest Nuxt keeps in the server build: which chunks each source needs. */
async function loadManifest(): Promise<Manifest | null> {
  try {
    const m = await import(pathToFileURL(path.join(OUTPUT, 'server/chunks/build/client.precomputed.mjs')).href)
    const c = (m.default ?? Object.values(m)[0]) as { dependencies: Record<string, { preload?: Record<string, ManifestEntry>; prefetch?: Record<string, ManifestEntry> }>; entrypoints: string[] }
    const byKey = new Map<string, ManifestEntry>()
    for (const d of Object.values(c.dependencies)) {
      for (const [k, v] of [...Object.entries(d.preload ?? {}), ...Object.entries(d.prefetch ?? {})]) if (v?.file) byKey.set(k, v)
    }
    const byFile = new Map([...byKey].map(([k, v]) => [v.file, k]))
    return byKey.size ? { byKey, byFile, entry: c.entrypoints } : null
  } catch {
    return null
  }
}

/** Route components of a case page, as Nuxt nests them. */
function routeSources(pagePath: string): string[] {
  const tail = pagePath.replace(/^\/cases\/\d+/, '')
  return ['layouts/default.vue', 'pages/cases/[id].vue', `pages/cases/[id]${tail ? tail : '/index'}.vue`]
}

/** Chunk files reachable from `keys`: static imports always, dynamic ones when asked (never the entry's: those are every page). */
function reach(man: Manifest, keys: string[], dynamic: boolean): Set<string> {
  const seen = new Set<string>()
  const files = new Set<string>()
  const walk = (k: string) => {
    if (seen.has(k)) return
    seen.add(k)
    const e = man.byKey.get(k)
    if (!e) return
    files.add(e.file)
    for (const i of e.imports ?? []) walk(i)
    if (dynamic && !man.entry.includes(k)) for (const i of e.dynamicImports ?? []) walk(i)
  }
  keys.forEach(walk)
  return files
}

function sourceName(man: Manifest | null, file: string): string | null {
  const k = man?.byFile.get(file.replace(/^.*\//, ''))
  if (!k) return null
  const nm = k.match(/node_modules\/((?:@[^/]+\/)?[^/]+)/)
  if (nm) return nm[1]!.startsWith('nuxt') ? 'Nuxt + Vue runtime' : nm[1]!
  return /^_/.test(k) ? null : k
}

// Set before any script of the page runs: notes when the app marks the body as hydrated (app.vue).
const HYDRATION_PROBE = `(() => {
  const mark = () => { if (document.body && document.body.dataset.hydrated === 'true' && !window.__benchHydratedAt) window.__benchHydratedAt = performance.now() }
  new MutationObserver(mark).observe(document, { subtree: true, attributes: true, attributeFilter: ['data-hydrated'] })
})()`

async function loadOnce(browser: Browser, baseURL: string, storageState: any, pagePath: string, warmReloads: number) {
  const context = await browser.newContext({ baseURL, storageState, viewport: { width: 1180, height: 820 }, hasTouch: true })
  try {
    await context.addInitScript(HYDRATION_PROBE)
    const page = await context.newPage()
    const cdp = await context.newCDPSession(page)
    await cdp.send('Emulation.setCPUThrottlingRate', { rate: 4 })
    const scripts = new Set<string>()
    const styles = new Set<string>()
    page.on('response', (r) => {
      const u = new URL(r.url())
      if (u.origin !== new URL(baseURL).origin) return
      const type = r.request().resourceType()
      if (type === 'script' || u.pathname.endsWith('.js')) scripts.add(u.pathname)
      else if (type === 'stylesheet' || u.pathname.endsWith('.css')) styles.add(u.pathname)
    })
    const res = await page.goto(pagePath, { waitUntil: 'domcontentloaded' })
    if (!res || res.status() !== 200) throw new Error(`${pagePath} answered ${res?.status()}`)
    await page.waitForSelector('body[data-hydrated="true"]', { timeout: 60_000 })
    const hydrated = await page.evaluate(() => (window as any).__benchHydratedAt as number)
    // chunks the page fetches right after hydrating count as its JS too
    await page.waitForLoadState('networkidle', { timeout: 10_000 }).catch(() => {})
    if (new URL(page.url()).pathname !== pagePath) throw new Error(`${pagePath} went to ${page.url()} (signed out?)`)
    // the page's JS is what the cold load fetched; reloads below only time the warm cache
    const js = [...scripts]
    const css = [...styles]
    const warm: number[] = []
    for (let i = 0; i < warmReloads; i++) {
      await page.reload({ waitUntil: 'domcontentloaded' })
      await page.waitForSelector('body[data-hydrated="true"]', { timeout: 60_000 })
      warm.push(await page.evaluate(() => (window as any).__benchHydratedAt as number))
    }
    return { hydrated, warm, scripts: js, styles: css }
  } finally {
    await context.close()
  }
}

export async function clientFigures(baseURL: string, email: string, password: string, pages: string[], loads: number, warmReloads = 3): Promise<{ browser: string; pages: PageFigures[] }> {
  const browser = await launchBrowser().catch((e) => {
    throw new Error(`chromium did not start (${process.env.CHROMIUM_PATH || '/usr/bin/chromium'}): install it with bash scripts/setup.sh --browser\n${e}`)
  })
  try {
    const ctx = await browser.newContext({ baseURL })
    const page = await ctx.newPage()
    await signIn(page, email, password)
    await page.waitForURL((u) => u.pathname === '/', { timeout: 30_000 })
    const storageState = await ctx.storageState()
    await ctx.close()

    const out: PageFigures[] = []
    for (const p of pages) {
      const hydrated: number[] = []
      const warm: number[] = []
      const js = new Set<string>()
      const css = new Set<string>()
      for (let i = 0; i < loads; i++) {
        const r = await loadOnce(browser, baseURL, storageState, p, i === 0 ? warmReloads : 0)
        hydrated.push(r.hydrated)
        warm.push(...r.warm)
        r.scripts.forEach((s) => js.add(s))
        r.styles.forEach((s) => css.add(s))
      }
      const man = await loadManifest()
      const route = routeSources(p)
      const eager = man ? reach(man, [...man.entry, ...route], false) : null
      const own = man ? reach(man, [...man.entry, ...route].filter((k) => !man.entry.includes(k)), true) : null
      if (own && eager) for (const f of eager) own.add(f)
      const all = [...js].map((f) => ({ file: f, s: sizes(f)! })).filter((c) => c.s)
      const kindOf = (f: string): Chunk['kind'] => {
        const base = f.replace(/^.*\//, '')
        if (!eager || !own) return 'eager'
        return eager.has(base) ? 'eager' : own.has(base) ? 'lazy' : 'prefetch'
      }
      const chunk = (c: { file: string; s: { gz: number } }): Chunk => {
        const src = sourceName(man, c.file)
        const found = holds(c.file)
        return { file: c.file, gzipBytes: c.s.gz, holds: [...new Set([src, ...found].filter((x): x is string => !!x))], kind: kindOf(c.file) }
      }
      const mine = all.filter((c) => kindOf(c.file) !== 'prefetch')
      const other = all.filter((c) => kindOf(c.file) === 'prefetch')
      const cssSizes = [...css].map((f) => sizes(f)).filter((s) => s)
      const sum = (xs: typeof all, k: 'gz' | 'raw' | 'br') => xs.reduce((a, c) => a + c.s[k], 0)
      out.push({
        path: p,
        js: {
          files: mine.length, rawBytes: sum(mine, 'raw'), gzipBytes: sum(mine, 'gz'), brotliBytes: sum(mine, 'br'),
          eagerGzipBytes: sum(mine.filter((c) => kindOf(c.file) === 'eager'), 'gz'), lazyGzipBytes: sum(mine.filter((c) => kindOf(c.file) === 'lazy'), 'gz'),
          chunks: mine.map(chunk).sort((a, b) => b.gzipBytes - a.gzipBytes),
        },
        prefetched: { files: other.length, gzipBytes: sum(other, 'gz'), chunks: other.map(chunk).sort((a, b) => b.gzipBytes - a.gzipBytes) },
        classifiedBy: man ? 'build manifest' : 'none (manifest not readable: all loaded JS counted)',
        css: { files: cssSizes.length, gzipBytes: cssSizes.reduce((a, x) => a + x!.gz, 0) },
        hydratedMs: hydrated,
        hydratedMedianMs: median(hydrated),
        warmHydratedMedianMs: median(warm),
      })
    }
    return { browser: browser.version(), pages: out }
  } finally {
    await browser.close()
  }
}
