// The server's defences, tested from outside as an attacker's page or script would meet them:
// CSRF (double-submit token and Origin), session seals, security headers, the body size limit, error
// bodies that give nothing away, and hostile text stored as text. (Tampered and idle or shift-old
// session cookies are in auth.test.ts; the browser side of hostile text is tests/browser/inert.test.ts.)
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { defaults, seal } from 'iron-webcrypto'
import { clientFrom, Client, CSRF_COOKIE, CSRF_HEADER } from '../helpers/http'
import { TEST_SESSION_PASSWORD } from '../helpers/env'
import { closeTestDb, makeFacility, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { createCase, newCaseBody } from '../helpers/cases'

const baseURL = inject('baseURL')
const NO_TOKEN = 'This request came without its security token. Reload the page and try again.'
let f: TestFacility
let circ: Client

beforeAll(async () => {
  f = await makeFacility()
  circ = clientFrom(baseURL)
  await circ.login(f.users.circulator.email, TEST_PASSWORD)
})
afterAll(closeTestDb)

/** The same device (session and CSRF cookie) but a request made without the token: a forged one. */
function forger(from: Client): Client {
  const c = new Client(baseURL, from.headers, { csrf: false })
  for (const name of ['nuxt-session', CSRF_COOKIE]) {
    const v = from.getCookie(name)
    if (v) c.setCookie(name, v)
  }
  return c
}

async function casesWithKey(clientKey: string) {
  return (await testDb().selectFrom('cases').select('id').where('client_key', '=', clientKey).execute()).length
}

describe('CSRF: every write carries the token from the cookie', () => {
  it('the first answer sets a fresh random token cookie that scripts can read, SameSite=Lax and Secure', async () => {
    const a = await fetch(`${baseURL}/api/health`)
    const b = await fetch(`${baseURL}/api/health`)
    const cookie = (r: Response) => r.headers.getSetCookie().find((c) => c.startsWith(`${CSRF_COOKIE}=`))
    const ca = cookie(a)!
    expect(ca).toBeTruthy()
    expect(ca).toMatch(new RegExp(`^${CSRF_COOKIE}=[A-Za-z0-9_-]{43};`)) // 32 random bytes, base64url
    expect(ca).toMatch(/SameSite=Lax/i)
    expect(ca).toMatch(/; Secure/i)
    expect(ca).toMatch(/Path=\//)
    expect(ca).not.toMatch(/HttpOnly/i)
    expect(cookie(b)!.split(';')[0]).not.toBe(ca.split(';')[0])
    // a device that has a token keeps it
    const again = await fetch(`${baseURL}/api/health`, { headers: { cookie: ca.split(';')[0]! } })
    expect(cookie(again)).toBeUndefined()
  })

  it('a signed-in write without the token is refused and writes nothing; with it, it lands', async () => {
    const body = newCaseBody(f)
    const r = await forger(circ).post('/api/cases', body)
    expect(r.status).toBe(403)
    expect(r.body.message).toBe(NO_TOKEN)
    expect(await casesWithKey(body.clientKey)).toBe(0)
    const ok = await circ.post('/api/cases', body)
    expect(ok.status).toBe(201)
    expect(await casesWithKey(body.clientKey)).toBe(1)
  })

  it('a wrong token is refused: another device’s, a shortened one, one with the cookie missing', async () => {
    const other = clientFrom(baseURL)
    const theirs = await other.csrfToken()
    const mine = circ.getCookie(CSRF_COOKIE)!
    expect(theirs).not.toBe(mine)
    const body = newCaseBody(f)
    for (const token of [theirs, mine.slice(0, -1), `${mine}x`, mine.replace(/^./, (c) => (c === 'A' ? 'B' : 'A'))]) {
      const r = await forger(circ).post('/api/cases', body, { [CSRF_HEADER]: token })
      expect(r.status, `token ${token}`).toBe(403)
      expect(r.body.message).toBe(NO_TOKEN)
    }
    // the header alone proves nothing: an attacker can write a header, but cannot read our cookie
    const noCookie = new Client(baseURL, circ.headers, { csrf: false })
    noCookie.setCookie('nuxt-session', circ.getCookie('nuxt-session')!)
    expect((await noCookie.post('/api/cases', body, { [CSRF_HEADER]: mine })).status).toBe(403)
    expect(await casesWithKey(body.clientKey)).toBe(0)
  })

  it('PATCH and DELETE need it too, and so do sign-in and sign-out', async () => {
    const id = await createCase(circ, f)
    expect((await forger(circ).patch(`/api/cases/${id}/items/1`, { disposition: 'wasted' })).status).toBe(403)
    // nuxt-auth-utils' own session route
    expect((await forger(circ).delete('/api/_auth/session')).status).toBe(403)
    expect((await forger(circ).post('/api/auth/logout')).status).toBe(403)
    expect((await circ.get('/api/auth/me')).status).toBe(200) // still signed in
    const fresh = new Client(baseURL, { 'x-forwarded-for': '192.0.2.41' }, { csrf: false })
    const login = await fresh.post('/api/auth/login', { email: f.users.scrub.email, password: TEST_PASSWORD })
    expect(login.status).toBe(403)
    expect(login.headers.getSetCookie().some((c) => c.startsWith('nuxt-session=') && c.includes('Fe26'))).toBe(false)
  })

  it('reads never need it', async () => {
    expect((await forger(circ).get('/api/cases')).status).toBe(200)
    expect((await forger(circ).get('/api/facility')).status).toBe(200)
  })
})

describe('CSRF: a write that says it comes from another site is refused', () => {
  it('a foreign Origin, or "null", is refused even with the right token', async () => {
    const body = newCaseBody(f)
    const { hostname, port } = new URL(baseURL)
    for (const origin of ['http://attacker.example', `http://${hostname}.attacker.example:${port}`, `http://${hostname}:1`, 'null']) {
      const r = await circ.post('/api/cases', body, { origin })
      expect(r.status, origin).toBe(403)
      expect(r.body.message).toMatch(/another site/)
    }
    expect(await casesWithKey(body.clientKey)).toBe(0)
    // our own origin passes
    expect((await circ.post('/api/cases', body, { origin: baseURL })).status).toBe(201)
  })

  it('behind the trusted proxy, the forwarded host is the one the Origin must match', async () => {
    // the test server runs with NUXT_TRUST_PROXY=1
    const proxied = { 'x-forwarded-host': 'isthmus.hospital.example', 'x-forwarded-proto': 'https' }
    const ours = await circ.post('/api/cases', newCaseBody(f), { ...proxied, origin: 'https://isthmus.hospital.example' })
    expect(ours.status).toBe(201)
    // the raw Host no longer counts once a proxy says otherwise
    const direct = await circ.post('/api/cases', newCaseBody(f), { ...proxied, origin: baseURL })
    expect(direct.status).toBe(403)
  })
})

describe('sessions whose seal has run out', () => {
  // Seal the way the server does (h3 sessions: iron-webcrypto with the server's password); the
  // timestamps inside look fresh, only the seal itself is old.
  async function sealed(opts: { createdAgo: number; sealOffset?: number }) {
    const u = f.users.circulator
    const now = Date.now()
    const body = {
      id: randomUUID(), createdAt: now - opts.createdAgo,
      data: { user: { id: u.id, name: u.name, email: u.email, role: 'circulator', facilityId: f.facilityId, facilityName: null }, loggedInAt: now - 1000, lastSeenAt: now - 1000 },
    }
    const c = new Client(baseURL)
    c.setCookie('nuxt-session', await seal(crypto, body, TEST_SESSION_PASSWORD, { ...defaults, ttl: 12 * 3600_000, localtimeOffsetMsec: opts.sealOffset ?? 0 }))
    return c
  }

  it('a fresh seal works (so the two below fail for their age alone)', async () => {
    expect((await (await sealed({ createdAgo: 1000 })).get('/api/auth/me')).status).toBe(200)
  })

  it('a seal past its own expiry is refused', async () => {
    const c = await sealed({ createdAgo: 1000, sealOffset: -13 * 3600_000 })
    expect((await c.get('/api/auth/me')).status).toBe(401)
  })

  it('a session created more than 12 hours ago is refused whatever its contents claim', async () => {
    const c = await sealed({ createdAgo: 12 * 3600_000 + 60_000 })
    expect((await c.get('/api/auth/me')).status).toBe(401)
  })
})

describe('security headers', () => {
  function common(h: Headers) {
    expect(h.get('x-content-type-options')).toBe('nosniff')
    expect(h.get('referrer-policy')).toBe('no-referrer')
    expect(h.get('x-frame-options')).toBe('DENY')
    expect(h.get('strict-transport-security')).toMatch(/^max-age=31536000/)
    expect(h.get('x-powered-by')).toBeNull()
    expect(h.get('content-security-policy')).toMatch(/frame-ancestors 'none'/)
  }

  it('a page: a CSP of this origin only, with a fresh nonce on each of its scripts; camera for us only', async () => {
    const r = await fetch(`${baseURL}/login`)
    expect(r.status).toBe(200)
    common(r.headers)
    const csp = r.headers.get('content-security-policy')!
    const directive = (name: string) => csp.split(';').map((d) => d.trim()).find((d) => d.startsWith(`${name} `))
    expect(directive('default-src')).toBe("default-src 'none'")
    expect(directive('object-src')).toBe("object-src 'none'")
    expect(directive('base-uri')).toBe("base-uri 'none'")
    expect(directive('connect-src')).toBe("connect-src 'self'")
    const nonce = directive('script-src')!.match(/'nonce-([A-Za-z0-9+/=_-]+)'/)![1]!
    expect(directive('script-src')).toBe(`script-src 'self' 'nonce-${nonce}'`)
    expect(directive('style-src')).toBe(`style-src 'self' 'nonce-${nonce}'`)
    expect(csp).not.toMatch(/unsafe-inline|unsafe-eval|https:|http:|\*/)
    const html = await r.text()
    const scripts = [...html.matchAll(/<script\b[^>]*>/g)].map((m) => m[0])
    expect(scripts.length).toBeGreaterThan(0)
    for (const s of scripts) expect(s).toContain(`nonce="${nonce}"`)
    const next = (await fetch(`${baseURL}/login`)).headers.get('content-security-policy')!
    expect(next).not.toContain(nonce)

    const pp = r.headers.get('permissions-policy')!
    expect(pp).toContain('camera=(self)')
    expect(pp).toContain('microphone=()')
    expect(pp).toContain('geolocation=()')
    expect(r.headers.get('cross-origin-opener-policy')).toBe('same-origin')
    expect(r.headers.get('cross-origin-embedder-policy')).toBe('require-corp')
    expect(r.headers.get('cross-origin-resource-policy')).toBe('same-origin')
  })

  it('an API answer, and an API error: nothing in them may run or be framed', async () => {
    const ok = await fetch(`${baseURL}/api/health`)
    common(ok.headers)
    expect(ok.headers.get('content-security-policy')).toMatch(/default-src 'none'/)
    const refused = await fetch(`${baseURL}/api/cases`, { headers: { accept: 'application/json' } })
    expect(refused.status).toBe(401)
    expect(refused.headers.get('x-content-type-options')).toBe('nosniff')
    expect(refused.headers.get('referrer-policy')).toBe('no-referrer')
    expect(refused.headers.get('content-security-policy')).toMatch(/frame-ancestors 'none'/)
    expect(refused.headers.get('x-powered-by')).toBeNull()
  })
})

describe('request size', () => {
  const padded = (bytes: number) => JSON.stringify({ ...newCaseBody(f), pad: 'x'.repeat(bytes) })

  it('a 2 MB JSON body is 413 before any route reads it, signed in or not', async () => {
    const body = padded(2_000_000)
    const r = await circ.request('POST', '/api/cases', body, { 'content-type': 'application/json' })
    expect(r.status).toBe(413)
    const anon = await clientFrom(baseURL).request('POST', '/api/auth/login', body, { 'content-type': 'application/json' })
    expect(anon.status).toBe(413)
    // PUT and DELETE too: the limit sits in front of every route (there is no PUT /api/cases at all)
    expect((await circ.request('PUT', '/api/cases', body, { 'content-type': 'application/json' })).status).toBe(413)
    expect((await circ.request('DELETE', '/api/cases', body, { 'content-type': 'application/json' })).status).toBe(413)
  })

  it('the CSV imports have room for their files, and still a cap', async () => {
    const coord = clientFrom(baseURL)
    await coord.login(f.users.coordinator.email, TEST_PASSWORD)
    const roomy = await coord.post('/api/catalog/import', { csv: `description,kind,gtin\n${'x'.repeat(2_000_000)}`, dryRun: true })
    expect(roomy.status).not.toBe(413)
    const huge = await coord.request('POST', '/api/catalog/import', JSON.stringify({ csv: 'x'.repeat(17_000_000) }), { 'content-type': 'application/json' })
    expect(huge.status).toBe(413)
  })

  it('a 2 MB PATCH body is 413 too; a small one still reaches its route', async () => {
    const coord = clientFrom(baseURL)
    await coord.login(f.users.coordinator.email, TEST_PASSWORD)
    const big = await coord.request('PATCH', '/api/catalog/items/1', JSON.stringify({ description: 'x'.repeat(2_000_000) }), { 'content-type': 'application/json' })
    expect(big.status).toBe(413)
    expect(big.body.message).toMatch(/too large/)
    const small = await coord.request('PATCH', '/api/catalog/items/2147480000', JSON.stringify({ description: 'Nail' }), { 'content-type': 'application/json' })
    expect(small.status).toBe(404) // read by the route, which finds no such item
  })

  it('a body under 1 MB still reaches the route', async () => {
    const r = await circ.request('POST', '/api/cases', padded(900_000), { 'content-type': 'application/json' })
    expect(r.status).toBe(201) // the extra field is ignored by the schema
  })
})

describe('error bodies give nothing away', () => {
  const LEAKS = [/\bat \//, /node_modules/, /\.(ts|mjs|js):\d+/, /\bSELECT\b/, /\bINSERT\b/, /\bUPDATE\b/, /\bFROM\b/, /kysely/i, /postgres/i, /"stack"/]

  function clean(r: { status: number; body: unknown }) {
    const text = typeof r.body === 'string' ? r.body : JSON.stringify(r.body)
    for (const leak of LEAKS) expect(text, `${r.status}: ${text}`).not.toMatch(leak)
  }

  it('404, 400 and 409 answers carry a message, never a stack trace or SQL', async () => {
    const notFound = await circ.get('/api/cases/2147480000')
    expect(notFound.status).toBe(404)
    clean(notFound)
    const badId = await circ.get('/api/cases/1%27%20OR%201=1--')
    expect(badId.status).toBe(404)
    clean(badId)

    const bad = await circ.post('/api/cases', { patient: { mrn: "1' OR '1'='1" }, side: 'middle' })
    expect(bad.status).toBe(400)
    expect(bad.body.data.fields).toBeTruthy()
    clean(bad)
    const junk = await circ.request('POST', '/api/cases', '{"patient": ', { 'content-type': 'application/json' })
    expect(junk.status).toBe(400)
    clean(junk)

    const first = newCaseBody(f)
    await createCase(circ, f, first)
    const clash = await circ.post('/api/cases', newCaseBody(f, { patient: { ...first.patient, familyName: 'Otherperson' } }))
    expect(clash.status).toBe(409)
    clean(clash)
    expect(clash.body.message).toMatch(/MRN/)
  })
})

describe('a NUL character is refused as a 400, wherever it hides', () => {
  // found by the fault layer's generated bodies: PostgreSQL text cannot hold \0, so it reached the insert as a 500
  it('in a scan, a nested patient field, or a query', async () => {
    const id = await createCase(circ, f)
    const scrub = clientFrom(baseURL)
    await scrub.login(f.users.scrub.email, TEST_PASSWORD)
    const scan = await scrub.post(`/api/cases/${id}/items`, { scan: '\u0000', source: 'camera', disposition: 'implanted', clientKey: randomUUID() })
    expect(scan.status).toBe(400)
    expect(scan.body.data.fields).toEqual({ scan: expect.stringMatching(/NUL/) })
    const nested = await circ.post('/api/cases', newCaseBody(f, { patient: { ...newCaseBody(f).patient, familyName: 'Ab\u0000c' } }))
    expect(nested.status).toBe(400)
    expect(nested.body.message).toMatch(/patient\.familyName/)
    const coord = clientFrom(baseURL)
    await coord.login(f.users.coordinator.email, TEST_PASSWORD)
    const q = await coord.get('/api/trace?lot=%00')
    expect(q.status).toBe(400)
  })
})

describe('hostile text is stored and served as text', () => {
  const NAMES = ["Robert'); DROP TABLE patients;--", '<script>alert(1)</script>']

  it.each(NAMES)('%s', async (familyName) => {
    const body = newCaseBody(f, { patient: { ...newCaseBody(f).patient, familyName, givenName: '<img src=x onerror=alert(2)>' } })
    const id = await createCase(circ, f, body)
    const row = await testDb().selectFrom('patients').select(['family_name', 'given_name']).where('facility_id', '=', f.facilityId)
      .where('mrn', '=', body.patient.mrn).executeTakeFirstOrThrow()
    expect(row).toEqual({ family_name: familyName, given_name: '<img src=x onerror=alert(2)>' })

    const api = await circ.get(`/api/cases/${id}`)
    expect(api.body.patient.familyName).toBe(familyName)
    expect(api.headers.get('content-type')).toMatch(/^application\/json/)

    // the server-rendered page escapes it: no tag from the name reaches the markup
    const page = await fetch(`${baseURL}/cases/${id}`, { headers: { cookie: circ.cookieHeader() } })
    expect(page.status).toBe(200)
    const html = await page.text()
    expect(html).not.toContain('<script>alert(1)</script>')
    expect(html).not.toContain('<img src=x')
    expect(html).toContain('&lt;img src=x onerror=alert(2)&gt;')
  })
})
