import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { defaults, seal } from 'iron-webcrypto'
import { clientFrom, Client } from '../helpers/http'
import { TEST_SESSION_PASSWORD } from '../helpers/env'
import { closeTestDb, makeFacility, tag, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'

const baseURL = inject('baseURL')
let f: TestFacility

beforeAll(async () => { f = await makeFacility() })
afterAll(closeTestDb)

describe('sign-in by role', () => {
  it.each(['circulator', 'scrub', 'surgeon', 'coordinator', 'admin'] as const)('%s signs in and /api/auth/me answers the role', async (role) => {
    const c = clientFrom(baseURL)
    const r = await c.login(f.users[role].email, TEST_PASSWORD)
    expect(r.body).toMatchObject({ id: f.users[role].id, role, email: f.users[role].email })
    const me = await c.get('/api/auth/me')
    expect(me.status).toBe(200)
    expect(me.body).toMatchObject({ id: f.users[role].id, name: f.users[role].name, email: f.users[role].email, role })
  })

  it('e-mail is matched without regard to case', async () => {
    const c = clientFrom(baseURL)
    const r = await c.post('/api/auth/login', { email: f.users.scrub.email.toUpperCase(), password: TEST_PASSWORD })
    expect(r.status).toBe(200)
  })

  it('the session cookie is HttpOnly, SameSite=Lax and Secure', async () => {
    const csrf = await new Client(baseURL).csrfToken()
    const r = await fetch(`${baseURL}/api/auth/login`, {
      method: 'POST', headers: { 'content-type': 'application/json', 'x-forwarded-for': '192.0.2.77', cookie: `isthmus-csrf=${csrf}`, 'x-csrf-token': csrf },
      body: JSON.stringify({ email: f.users.admin.email, password: TEST_PASSWORD }),
    })
    const cookie = r.headers.getSetCookie().find((c) => c.startsWith('nuxt-session='))!
    expect(cookie).toMatch(/HttpOnly/i)
    expect(cookie).toMatch(/SameSite=Lax/i)
    expect(cookie).toMatch(/Secure/i)
  })

  it('sign-out ends the session', async () => {
    const c = clientFrom(baseURL)
    await c.login(f.users.surgeon.email, TEST_PASSWORD)
    expect((await c.post('/api/auth/logout')).status).toBe(200)
    expect((await c.get('/api/auth/me')).status).toBe(401)
  })
})

describe('failures are vague, throttled and audited', () => {
  it('a wrong password is 401 with the same message as an unknown account', async () => {
    const c = clientFrom(baseURL)
    const wrong = await c.post('/api/auth/login', { email: f.users.circulator.email, password: 'not-the-password' })
    const unknown = await c.post('/api/auth/login', { email: `nobody-${tag()}@test.isthmus.test`, password: 'not-the-password' })
    expect(wrong.status).toBe(401)
    expect(unknown.status).toBe(401)
    expect(wrong.body.message).toBe(unknown.body.message)
    expect(wrong.body.message).toMatch(/e-mail or password/i)
  })

  it('a malformed body is 400 naming the field, not 500', async () => {
    const c = clientFrom(baseURL)
    const r = await c.post('/api/auth/login', { email: 'not-an-email' })
    expect(r.status).toBe(400)
    expect(Object.keys(r.body.data.fields)).toEqual(expect.arrayContaining(['email', 'password']))
    const junk = await c.request('POST', '/api/auth/login', '{not json', { 'content-type': 'application/json' })
    expect(junk.status).toBe(400)
  })

  // OWASP Authentication Cheat Sheet (throttling): five failures per account per minute, the sixth is refused.
  it('the sixth wrong password in a minute is 429 with Retry-After, even from another address', async () => {
    const t = await makeFacility()
    const email = t.users.coordinator.email
    for (let i = 0; i < 5; i++) {
      const r = await clientFrom(baseURL).post('/api/auth/login', { email, password: `wrong-${i}` })
      expect(r.status).toBe(401)
    }
    const sixth = await clientFrom(baseURL).post('/api/auth/login', { email, password: TEST_PASSWORD })
    expect(sixth.status).toBe(429)
    const after = Number(sixth.headers.get('retry-after'))
    expect(after).toBeGreaterThan(0)
    expect(after).toBeLessThanOrEqual(60)
    expect(sixth.body.message).toMatch(/wait \d+ seconds/i)
  })

  it('many failures from one address are throttled across accounts', async () => {
    const c = clientFrom(baseURL)
    let last = 0
    for (let i = 0; i < 21; i++) {
      last = (await c.post('/api/auth/login', { email: `guess-${i}-${tag()}@test.isthmus.test`, password: 'x' })).status
    }
    expect(last).toBe(429)
  })

  it('sign-in, failed sign-in and sign-out land in audit_log', async () => {
    const t = await makeFacility()
    const u = t.users.scrub
    const c = clientFrom(baseURL)
    await c.post('/api/auth/login', { email: u.email, password: 'wrong-one' })
    await c.login(u.email, TEST_PASSWORD)
    await c.post('/api/auth/logout')
    const rows = await testDb().selectFrom('audit_log').select(['action', 'actor_id', 'ip']).where('entity', '=', 'user')
      .where('entity_id', '=', String(u.id)).orderBy('id').execute()
    expect(rows.map((r) => r.action)).toEqual(['auth.login_failed', 'auth.login', 'auth.logout'])
    expect(rows.every((r) => r.actor_id === u.id && r.ip)).toBe(true)
  })

  it('an inactive account cannot sign in, and its live session stops working', async () => {
    const t = await makeFacility()
    const c = clientFrom(baseURL)
    await c.login(t.users.scrub.email, TEST_PASSWORD)
    await testDb().updateTable('users').set({ active: false }).where('id', '=', t.users.scrub.id).execute()
    await new Promise((r) => setTimeout(r, 5200)) // the activity cache holds for 5 s
    expect((await c.get('/api/auth/me')).status).toBe(401)
    expect((await clientFrom(baseURL).post('/api/auth/login', { email: t.users.scrub.email, password: TEST_PASSWORD })).status).toBe(401)
  })
})

describe('protected routes', () => {
  it('anonymous is 401 and a wrong role is 403', async () => {
    expect((await new Client(baseURL).get('/api/auth/me')).status).toBe(401)
    expect((await new Client(baseURL).get('/api/cases')).status).toBe(401)
    const scrub = clientFrom(baseURL)
    await scrub.login(f.users.scrub.email, TEST_PASSWORD)
    // creating a case is for the circulator, surgeon, coordinator or admin
    const r = await scrub.post('/api/cases', {})
    expect(r.status).toBe(403)
  })

  it('a tampered session cookie is rejected', async () => {
    const c = clientFrom(baseURL)
    await c.login(f.users.admin.email, TEST_PASSWORD)
    const cookie = c.getCookie('nuxt-session')!
    // flip one character inside the sealed payload
    const i = Math.floor(cookie.length / 2)
    const flipped = cookie.slice(0, i) + (cookie[i] === 'A' ? 'B' : 'A') + cookie.slice(i + 1)
    const forged = new Client(baseURL)
    forged.setCookie('nuxt-session', flipped)
    expect((await forged.get('/api/auth/me')).status).toBe(401)
    // a cookie sealed with another password is refused too
    const other = new Client(baseURL)
    other.setCookie('nuxt-session', 'Fe26.2**0000**AAAA*BBBB**0000*CCCC')
    expect((await other.get('/api/auth/me')).status).toBe(401)
  })

  // Seal sessions the way the server does (h3 sessions: iron-webcrypto with the server's password), so
  // the clock can be set back without waiting 30 minutes.
  async function forged(user: { id: number; email: string; name: string }, role: string, ages: { loggedIn: number; lastSeen: number }) {
    const now = Date.now()
    const body = {
      id: crypto.randomUUID(), createdAt: now - ages.loggedIn,
      data: { user: { id: user.id, name: user.name, email: user.email, role, facilityId: f.facilityId, facilityName: null },
        loggedInAt: now - ages.loggedIn, lastSeenAt: now - ages.lastSeen },
    }
    const sealed = await seal(crypto, body, TEST_SESSION_PASSWORD, { ...defaults, ttl: 12 * 3600 * 1000 })
    const c = new Client(baseURL)
    c.setCookie('nuxt-session', sealed)
    return c
  }

  it('a session idle for more than 30 minutes or older than a 12-hour shift is refused', async () => {
    const u = f.users.circulator
    const fresh = await forged(u, 'circulator', { loggedIn: 60_000, lastSeen: 1000 })
    expect((await fresh.get('/api/auth/me')).status).toBe(200)
    const idle = await forged(u, 'circulator', { loggedIn: 40 * 60_000, lastSeen: 31 * 60_000 })
    const r = await idle.get('/api/auth/me')
    expect(r.status).toBe(401)
    const shift = await forged(u, 'circulator', { loggedIn: 12 * 3600_000 + 60_000, lastSeen: 1000 })
    expect((await shift.get('/api/auth/me')).status).toBe(401)
  })

  it('a session claiming another role than the account has is refused', async () => {
    const c = await forged(f.users.scrub, 'admin', { loggedIn: 1000, lastSeen: 1000 })
    expect((await c.get('/api/auth/me')).status).toBe(401)
  })
})
