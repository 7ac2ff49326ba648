import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { Client, clientFrom, signInRoles } from '../helpers/http'
import { closeTestDb, makeFacility, tag, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { standardShelf } from '../helpers/catalog'
import { confirm, createCase, gs1Scan, newCaseBody, reading, scan } from '../helpers/cases'

const baseURL = inject('baseURL')
let f: TestFacility
let shelf: Awaited<ReturnType<typeof standardShelf>>
const as: Record<string, Client> = {}
const GOOD_PASSWORD = 'amber-lantern-quiet-71'

beforeAll(async () => {
  f = await makeFacility()
  shelf = await standardShelf(f)
  Object.assign(as, await signInRoles(baseURL, f, TEST_PASSWORD))
})
afterAll(closeTestDb)

function newPerson(over: Record<string, unknown> = {}) {
  const t = tag()
  return { name: `Rowan Testfield ${t}`, email: `rowan-${t}@test.isthmus.test`, role: 'scrub', password: GOOD_PASSWORD, clientKey: randomUUID(), ...over }
}

async function addPerson(over: Record<string, unknown> = {}) {
  const body = newPerson(over)
  const r = await as.admin!.post('/api/admin/users', body)
  if (r.status !== 201) throw new Error(`person not created: ${r.status} ${JSON.stringify(r.body)}`)
  return { ...body, id: r.body.person.id as number }
}

function auditRows(entity: string, entityId: number | string) {
  return testDb().selectFrom('audit_log').selectAll().where('entity', '=', entity).where('entity_id', '=', String(entityId)).orderBy('id').execute()
}

async function settings(c: Client = as.admin!) {
  const r = await c.get('/api/admin/settings')
  expect(r.status).toBe(200)
  return r.body
}

function settingsBody(s: any, over: Record<string, unknown> = {}) {
  return {
    nailClearanceMm: s.profile.nailClearanceMm, distalScrewRounding: s.profile.distalScrewRounding, tadLimitMm: s.profile.tadLimitMm,
    gsSubstitute: s.facility.gsSubstitute, recordsInbox: s.facility.recordsInbox, timeZone: s.facility.timeZone, ...over,
  }
}

describe('who may use the admin routes', () => {
  const routes = (id: number): [string, string, unknown?][] => [
    ['GET', '/api/admin/users'],
    ['POST', '/api/admin/users', newPerson()],
    ['PATCH', `/api/admin/users/${id}`, { name: 'Renamed Person' }],
    ['POST', `/api/admin/users/${id}/password`, { password: GOOD_PASSWORD }],
    ['GET', '/api/admin/settings'],
    ['PUT', '/api/admin/settings', { nailClearanceMm: 1, distalScrewRounding: 'up', tadLimitMm: 25, timeZone: 'UTC' }],
    ['GET', '/api/admin/audit'],
    ['GET', '/api/admin/phi-access'],
  ]

  it('every other role gets 403 and nothing changes', async () => {
    const target = f.users.scrub.id
    for (const role of ['circulator', 'scrub', 'surgeon', 'coordinator'] as const) {
      for (const [method, url, body] of routes(target)) {
        const r = await as[role]!.request(method, url, body)
        expect(r.status, `${role} ${method} ${url}`).toBe(403)
        // refused for the role, not for some other reason that also answers 403
        expect(r.body.message, `${role} ${method} ${url}`).toBe('Your role does not allow this.')
      }
    }
    const scrub = await testDb().selectFrom('users').select('name').where('id', '=', target).executeTakeFirstOrThrow()
    expect(scrub.name).toBe(f.users.scrub.name)
  })

  it('without a session every route is 401', async () => {
    const anon = clientFrom(baseURL)
    for (const [method, url, body] of routes(f.users.scrub.id)) {
      expect((await anon.request(method, url, body)).status, `${method} ${url}`).toBe(401)
    }
  })

  it('each route works for the admin', async () => {
    const p = await addPerson()
    const results = [
      await as.admin!.get('/api/admin/users'),
      await as.admin!.patch(`/api/admin/users/${p.id}`, { name: `${p.name} Jr` }),
      await as.admin!.post(`/api/admin/users/${p.id}/password`, { password: 'violet-harbour-seven-42' }),
      await as.admin!.get('/api/admin/settings'),
      await as.admin!.put('/api/admin/settings', settingsBody(await settings())),
      await as.admin!.get('/api/admin/audit'),
      await as.admin!.get('/api/admin/phi-access'),
    ]
    expect(results.map((r) => r.status)).toEqual([200, 200, 200, 200, 200, 200, 200])
  })
})

describe('people', () => {
  it('an admin adds a person to their own facility; the person signs in with the initial password', async () => {
    const body = newPerson({ email: `Mixed.Case-${tag()}@Test.Isthmus.Test`, role: 'circulator' })
    const r = await as.admin!.post('/api/admin/users', body)
    expect(r.status).toBe(201)
    expect(r.body.person).toMatchObject({ name: body.name, email: (body.email as string).toLowerCase(), role: 'circulator', active: true })
    expect(r.body.person).not.toHaveProperty('password_hash')
    const row = await testDb().selectFrom('users').selectAll().where('id', '=', r.body.person.id).executeTakeFirstOrThrow()
    expect(row.facility_id).toBe(f.facilityId)
    expect(row.password_hash).not.toContain(GOOD_PASSWORD)
    // the same request again (a retry after a lost answer) makes no second account
    const again = await as.admin!.post('/api/admin/users', body)
    expect(again.status).toBe(200)
    expect(again.body).toMatchObject({ replayed: true, person: { id: r.body.person.id } })
    const c = clientFrom(baseURL)
    const me = await c.login(body.email as string, GOOD_PASSWORD)
    expect(me.body).toMatchObject({ role: 'circulator', facilityId: f.facilityId })
    // audited with before/after, never the password or its hash
    const audit = await auditRows('user', r.body.person.id)
    const created = audit.find((a) => a.action === 'user.create')!
    expect(created.actor_id).toBe(f.users.admin.id)
    expect(created.details).toMatchObject({ before: null, after: { name: body.name, role: 'circulator', active: true } })
    expect(JSON.stringify(created.details)).not.toMatch(/password|scrypt|amber-lantern/i)
  })

  it('a duplicate e-mail (in any case) is 409 with a clear message beside the field', async () => {
    const p = await addPerson()
    const r = await as.admin!.post('/api/admin/users', newPerson({ email: p.email.toUpperCase() }))
    expect(r.status).toBe(409)
    expect(r.body.message).toMatch(/already exists/)
    expect(r.body.data.fields.email).toMatch(/already has an account/)
    // also against another facility's account: e-mail addresses are unique across the whole system
    const other = await makeFacility()
    const r2 = await as.admin!.post('/api/admin/users', newPerson({ email: other.users.scrub.email }))
    expect(r2.status).toBe(409)
  })

  it('a weak initial password is 400 with the policy message on the password field', async () => {
    const short = await as.admin!.post('/api/admin/users', newPerson({ password: 'short-pw' }))
    expect(short.status).toBe(400)
    expect(short.body.data.fields.password).toBe('Use at least 12 characters.')
    const samey = await as.admin!.post('/api/admin/users', newPerson({ password: 'aaaaaaaaaaaaaaaa' }))
    expect(samey.body.data.fields.password).toBe('Use more than three different characters.')
    const named = await as.admin!.post('/api/admin/users', newPerson({ name: 'Wilhelmina Quarry', password: 'wilhelmina-1234567' }))
    expect(named.status).toBe(400)
    expect(named.body.data.fields.password).toBe('Do not use your name in the password.')
    const bad = await as.admin!.post('/api/admin/users', newPerson({ name: '', email: 'not-an-address', role: 'janitor' }))
    expect(Object.keys(bad.body.data.fields).sort()).toEqual(['email', 'name', 'role'])
  })

  it('lists the facility’s people and filters by role, active and a name or e-mail fragment', async () => {
    const p = await addPerson({ role: 'coordinator' })
    const all = (await as.admin!.get('/api/admin/users')).body
    expect(all.facility.id).toBe(f.facilityId)
    const ids = all.people.map((x: any) => x.id)
    expect(ids).toEqual(expect.arrayContaining([f.users.admin.id, f.users.scrub.id, p.id]))
    // the admin signed in during set-up: the list says when
    expect(all.people.find((x: any) => x.id === f.users.admin.id).lastSignInAt).toBeTruthy()
    const other = await makeFacility()
    expect(ids).not.toContain(other.users.admin.id)
    const coordinators = (await as.admin!.get('/api/admin/users?role=coordinator')).body.people
    expect(coordinators.every((x: any) => x.role === 'coordinator')).toBe(true)
    expect(coordinators.map((x: any) => x.id)).toContain(p.id)
    const byName = (await as.admin!.get(`/api/admin/users?q=${encodeURIComponent(p.name.split(' ').pop()!)}`)).body.people
    expect(byName.map((x: any) => x.id)).toEqual([p.id])
    await as.admin!.patch(`/api/admin/users/${p.id}`, { active: false })
    const inactive = (await as.admin!.get('/api/admin/users?active=false')).body.people
    expect(inactive.map((x: any) => x.id)).toContain(p.id)
    expect(inactive.every((x: any) => x.active === false)).toBe(true)
    const active = (await as.admin!.get('/api/admin/users?active=true')).body.people
    expect(active.map((x: any) => x.id)).not.toContain(p.id)
    expect((await as.admin!.get('/api/admin/users?role=janitor')).status).toBe(400)
  })

  it('renames and changes a role with before/after in the audit trail', async () => {
    const p = await addPerson({ role: 'scrub' })
    const r = await as.admin!.patch(`/api/admin/users/${p.id}`, { name: 'Morgan Fieldstone', role: 'circulator' })
    expect(r.status).toBe(200)
    expect(r.body.person).toMatchObject({ name: 'Morgan Fieldstone', role: 'circulator', active: true })
    const update = (await auditRows('user', p.id)).find((a) => a.action === 'user.update')!
    expect(update.details).toEqual({
      before: { name: p.name, email: p.email, role: 'scrub', active: true },
      after: { name: 'Morgan Fieldstone', email: p.email, role: 'circulator', active: true },
    })
    // no change, no audit row
    const n = (await auditRows('user', p.id)).length
    expect((await as.admin!.patch(`/api/admin/users/${p.id}`, { role: 'circulator' })).body.changed).toBe(false)
    expect((await auditRows('user', p.id)).length).toBe(n)
    expect((await as.admin!.patch(`/api/admin/users/${p.id}`, {})).status).toBe(400)
  })

  it('an admin can neither deactivate nor demote themselves', async () => {
    const off = await as.admin!.patch(`/api/admin/users/${f.users.admin.id}`, { active: false })
    expect(off.status).toBe(409)
    expect(off.body.message).toMatch(/cannot deactivate your own account/)
    const demote = await as.admin!.patch(`/api/admin/users/${f.users.admin.id}`, { role: 'coordinator' })
    expect(demote.status).toBe(409)
    expect(demote.body.message).toMatch(/cannot take the admin role from yourself/)
    const row = await testDb().selectFrom('users').select(['active', 'role']).where('id', '=', f.users.admin.id).executeTakeFirstOrThrow()
    expect(row).toEqual({ active: true, role: 'admin' })
    expect((await as.admin!.get('/api/admin/users')).status).toBe(200)
    // renaming oneself is fine, and the session (the top bar) follows
    expect((await as.admin!.patch(`/api/admin/users/${f.users.admin.id}`, { name: `${f.users.admin.name} Renamed`, active: true })).status).toBe(200)
    expect((await as.admin!.get('/api/auth/me')).body.name).toBe(`${f.users.admin.name} Renamed`)
    expect((await as.admin!.patch(`/api/admin/users/${f.users.admin.id}`, { name: f.users.admin.name })).status).toBe(200)
    expect((await as.admin!.get('/api/auth/me')).body.name).toBe(f.users.admin.name)
  })

  it('another facility’s admin cannot see or change this facility’s people', async () => {
    const other = await makeFacility()
    const stranger = clientFrom(baseURL)
    await stranger.login(other.users.admin.email, TEST_PASSWORD)
    expect((await stranger.patch(`/api/admin/users/${f.users.scrub.id}`, { active: false })).status).toBe(404)
    expect((await stranger.post(`/api/admin/users/${f.users.scrub.id}/password`, { password: GOOD_PASSWORD })).status).toBe(404)
    const row = await testDb().selectFrom('users').select('active').where('id', '=', f.users.scrub.id).executeTakeFirstOrThrow()
    expect(row.active).toBe(true)
  })

  it('a deactivated person’s session is refused within seconds and they cannot sign in; reactivated, they can', async () => {
    const p = await addPerson({ role: 'circulator' })
    const device = clientFrom(baseURL)
    await device.login(p.email, GOOD_PASSWORD)
    expect((await device.get('/api/cases')).status).toBe(200)
    const off = await as.admin!.patch(`/api/admin/users/${p.id}`, { active: false })
    expect(off.status).toBe(200)
    expect(off.body.person.active).toBe(false)
    const started = Date.now()
    let status = 200
    while (Date.now() - started < 6500) {
      status = (await device.get('/api/cases')).status
      if (status === 401) break
      await new Promise((r) => setTimeout(r, 250))
    }
    expect(status).toBe(401)
    expect(Date.now() - started).toBeLessThan(6500)
    const retry = await clientFrom(baseURL).post('/api/auth/login', { email: p.email, password: GOOD_PASSWORD })
    expect(retry.status).toBe(401)
    expect((await auditRows('user', p.id)).map((a) => a.action)).toContain('user.deactivate')

    expect((await as.admin!.patch(`/api/admin/users/${p.id}`, { active: true })).status).toBe(200)
    expect((await clientFrom(baseURL).post('/api/auth/login', { email: p.email, password: GOOD_PASSWORD })).status).toBe(200)
    expect((await auditRows('user', p.id)).map((a) => a.action)).toContain('user.reactivate')
  })

  it('resets a password: policy-checked with the person’s own name, the old one stops working, the audit keeps no password', async () => {
    const p = await addPerson({ name: 'Evangeline Brookmoor' })
    const weak = await as.admin!.post(`/api/admin/users/${p.id}/password`, { password: 'tiny' })
    expect(weak.status).toBe(400)
    expect(weak.body.data.fields.password).toBe('Use at least 12 characters.')
    const named = await as.admin!.post(`/api/admin/users/${p.id}/password`, { password: 'brookmoor-2026-xyz' })
    expect(named.status).toBe(400)
    expect(named.body.data.fields.password).toBe('Do not use your name in the password.')
    // a device still signed in with the old password (a lost phone, a shared tablet)
    const before = clientFrom(baseURL)
    expect((await before.post('/api/auth/login', { email: p.email, password: GOOD_PASSWORD })).status).toBe(200)
    expect((await before.get('/api/facility')).status).toBe(200)
    const next = 'copper-meadow-ninety-3'
    expect((await as.admin!.post(`/api/admin/users/${p.id}/password`, { password: next })).status).toBe(200)
    expect((await clientFrom(baseURL).post('/api/auth/login', { email: p.email, password: GOOD_PASSWORD })).status).toBe(401)
    // the reset ends every session made before it
    const ended = await before.get('/api/facility')
    expect(ended.status).toBe(401)
    expect(ended.body.message).toBe('The password of this account was reset. Sign in again with the new password.')
    const after = clientFrom(baseURL)
    expect((await after.post('/api/auth/login', { email: p.email, password: next })).status).toBe(200)
    expect((await after.get('/api/facility')).status).toBe(200)
    const audit = await auditRows('user', p.id)
    const reset = audit.filter((a) => a.action === 'user.password_reset')
    expect(reset).toHaveLength(1)
    for (const a of audit) expect(JSON.stringify(a.details)).not.toMatch(/copper-meadow|amber-lantern|scrypt|password_hash/)
  })
})

describe('facility settings', () => {
  it('refuses bad values field by field: clearance range, rounding, tip-apex limit, GS substitute, inbox, time zone', async () => {
    const s = await settings()
    const r = await as.admin!.put('/api/admin/settings', settingsBody(s, {
      nailClearanceMm: 2, distalScrewRounding: 'sideways', tadLimitMm: -3, gsSubstitute: '-', recordsInbox: 'records at hospital', timeZone: 'Mars/Olympus_Mons',
    }))
    expect(r.status).toBe(400)
    expect(r.body.data.fields).toMatchObject({
      nailClearanceMm: 'Nail clearance must be from 0.5 to 1.5 mm.',
      distalScrewRounding: 'Choose up or down.',
      tadLimitMm: 'The tip-apex limit must be above 0 mm.',
      gsSubstitute: expect.stringMatching(/can occur in UDI data/),
      recordsInbox: expect.stringMatching(/valid e-mail/),
      timeZone: expect.stringMatching(/time zone name/),
    })
    // GS1 data characters, whitespace and ']' cannot stand in for GS; neither can two characters
    for (const ch of ['A', '7', '%', ' ', ']', '~~']) {
      const x = await as.admin!.put('/api/admin/settings', settingsBody(s, { gsSubstitute: ch }))
      expect(x.status, JSON.stringify(ch)).toBe(400)
      expect(x.body.data.fields.gsSubstitute).toBeTruthy()
    }
    expect((await as.admin!.put('/api/admin/settings', settingsBody(s, { nailClearanceMm: 0.4 }))).status).toBe(400)
    expect((await as.admin!.put('/api/admin/settings', settingsBody(s, { nailClearanceMm: 1.255 }))).status).toBe(400)
    // nothing was saved
    expect((await settings()).history).toHaveLength(s.history.length)
  })

  it('saving unchanged rules makes no new version; a change to inbox and time zone is audited with before/after', async () => {
    const other = await makeFacility()
    const admin = clientFrom(baseURL)
    await admin.login(other.users.admin.email, TEST_PASSWORD)
    const s = await settings(admin)
    expect(s.profile).toEqual({ version: 1, nailClearanceMm: 1, distalScrewRounding: 'up', tadLimitMm: 25 })
    const r = await admin.put('/api/admin/settings', settingsBody(s, { recordsInbox: 'Records@Hospital.example', timeZone: 'Europe/Berlin' }))
    expect(r.status).toBe(200)
    expect(r.body).toMatchObject({ newVersion: null, facilityChanged: true, facility: { recordsInbox: 'records@hospital.example', timeZone: 'Europe/Berlin' } })
    expect(r.body.history.map((h: any) => h.version)).toEqual([1])
    const audit = await auditRows('facility', other.facilityId)
    expect(audit.map((a) => a.action)).toEqual(['settings.update'])
    expect(audit[0]!.details).toEqual({
      before: { timeZone: 'UTC', gsSubstitute: null, recordsInbox: null },
      after: { timeZone: 'Europe/Berlin', gsSubstitute: null, recordsInbox: 'records@hospital.example' },
    })
    // clearing the inbox again is allowed (no copies sent)
    const cleared = await admin.put('/api/admin/settings', settingsBody(r.body, { recordsInbox: '' }))
    expect(cleared.body.facility.recordsInbox).toBeNull()
  })

  it('changing the rule profile changes new sizing results, not earlier cases’ or signed ones', async () => {
    const other = await makeFacility()
    const otherShelf = await standardShelf(other)
    const c: Record<string, Client> = {}
    for (const role of ['circulator', 'scrub', 'surgeon', 'admin'] as const) {
      c[role] = clientFrom(baseURL)
      await c[role].login(other.users[role].email, TEST_PASSWORD)
    }
    // 12.0 − 1.0 clearance = 11.0 → 11 mm; 12.0 − 1.5 = 10.5 → 10 mm (AO Surgery Reference: nail 1–1.5 mm under the last reamer)
    const nailReadings = async (id: number) => {
      for (const [k, v] of [['reamed_diameter', 12], ['nail_length', 385], ['native_angle', 127]] as const) {
        expect((await reading(c.circulator!, id, k, v)).status).toBe(201)
      }
    }
    const a = await createCase(c.circulator!, other)
    await nailReadings(a)
    const aBefore = (await c.circulator!.get(`/api/cases/${a}/sizing`)).body
    expect(aBefore.rules).toMatchObject({ version: 1, nailClearanceMm: 1 })
    expect(aBefore.nail.ideal).toMatchObject({ diameterMm: 11, lengthMm: 380 })

    // a case signed under version 1
    const signed = await createCase(c.circulator!, other)
    await nailReadings(signed)
    const ss = (await c.circulator!.get(`/api/cases/${signed}/sizing`)).body
    await confirm(c.surgeon!, signed, 'nail', ss.nail.ideal.id)
    const nail = otherShelf.rows.find((r) => r.id === ss.nail.ideal.id)!
    const logged = await scan(c.scrub!, signed, gs1Scan(nail.gtin, { expiry: '2030-12-31', lot: 'V1-LOT', serial: `S${tag()}`.toUpperCase() }))
    expect(logged.status).toBe(201)
    await c.circulator!.post(`/api/cases/${signed}/items/${logged.body.item.id}/acknowledge`, {})
    expect((await c.circulator!.post(`/api/cases/${signed}/close`)).status).toBe(200)
    expect((await c.surgeon!.post(`/api/cases/${signed}/sign`, { password: TEST_PASSWORD })).status).toBe(200)

    const s = await settings(c.admin!)
    const saved = await c.admin!.put('/api/admin/settings', settingsBody(s, { nailClearanceMm: 1.5, baseVersion: 1 }))
    expect(saved.status).toBe(200)
    expect(saved.body.newVersion).toBe(2)
    expect(saved.body.profile).toEqual({ version: 2, nailClearanceMm: 1.5, distalScrewRounding: 'up', tadLimitMm: 25 })
    expect(saved.body.history.map((h: any) => [h.version, h.nailClearanceMm, h.createdBy])).toEqual([[2, 1.5, other.users.admin.name], [1, 1, null]])
    // version 1 is still there, unchanged, and the database refuses to change it
    const v1 = await testDb().selectFrom('rule_profiles').selectAll().where('facility_id', '=', other.facilityId).where('version', '=', 1).executeTakeFirstOrThrow()
    expect(Number(v1.nail_clearance_mm)).toBe(1)
    await expect(testDb().updateTable('rule_profiles').set({ nail_clearance_mm: 1.5 }).where('id', '=', v1.id).execute()).rejects.toThrow(/append-only/)
    // a save from a form loaded at version 1 no longer goes through: someone else saved version 2
    const stale = await c.admin!.put('/api/admin/settings', settingsBody(s, { nailClearanceMm: 0.5, baseVersion: 1 }))
    expect(stale.status).toBe(409)
    expect(stale.body.message).toMatch(/version 2/)

    const b = await createCase(c.circulator!, other)
    await nailReadings(b)
    const bSizing = (await c.circulator!.get(`/api/cases/${b}/sizing`)).body
    expect(bSizing.rules).toMatchObject({ version: 2, nailClearanceMm: 1.5 })
    expect(bSizing.nail.ideal).toMatchObject({ diameterMm: 10, lengthMm: 380 })
    const bRow = await testDb().selectFrom('cases').innerJoin('rule_profiles as rp', 'rp.id', 'cases.rule_profile_id').select('rp.version').where('cases.id', '=', b).executeTakeFirstOrThrow()
    expect(bRow.version).toBe(2)

    // case A is still sized under its own version 1 (caseHeader joins the case's rule_profile_id)
    const aAfter = (await c.circulator!.get(`/api/cases/${a}/sizing`)).body
    expect(aAfter.rules).toMatchObject({ version: 1, nailClearanceMm: 1 })
    expect(aAfter.nail.ideal.id).toBe(aBefore.nail.ideal.id)
    // and so is the signed one, in its sizing and in its stored record
    const sAfter = (await c.circulator!.get(`/api/cases/${signed}/sizing`)).body
    expect(sAfter.rules.version).toBe(1)
    expect(sAfter.nail.ideal).toMatchObject({ diameterMm: 11 })
    const rec = await testDb().selectFrom('record_versions').select('record').where('case_id', '=', signed).executeTakeFirstOrThrow()
    expect(JSON.stringify(rec.record)).toMatch(/"ruleProfile":\{[^}]*"version":1/)

    // the history counts the cases each version governs, and the change is in the audit trail
    const h = (await settings(c.admin!)).history
    expect(h.map((x: any) => [x.version, x.cases])).toEqual([[2, 1], [1, 2]])
    const audit = await testDb().selectFrom('audit_log').selectAll().where('action', '=', 'rule_profile.create').where('actor_id', '=', other.users.admin.id).execute()
    expect(audit).toHaveLength(1)
    expect(audit[0]!.details).toMatchObject({
      version: 2, before: { version: 1, nailClearanceMm: 1, distalScrewRounding: 'up', tadLimitMm: 25 }, after: { version: 2, nailClearanceMm: 1.5 },
    })
  })

  it('the GS substitute setting makes a wedge scan with that character parse', async () => {
    const other = await makeFacility()
    const otherShelf = await standardShelf(other)
    const admin = clientFrom(baseURL)
    await admin.login(other.users.admin.email, TEST_PASSWORD)
    const scrub = clientFrom(baseURL)
    await scrub.login(other.users.scrub.email, TEST_PASSWORD)
    const circ = clientFrom(baseURL)
    await circ.login(other.users.circulator.email, TEST_PASSWORD)
    const id = await createCase(circ, other)
    const he = otherShelf.find((s) => s.kind === 'head_element' && s.len === 90)
    const sn = `W${tag()}`.toUpperCase()
    const wedge = gs1Scan(he.gtin, { expiry: '2030-12-31', lot: `L${he.id}`, serial: sn }).replace('\u001D', '|')
    // without the setting the lot runs on into the serial (GS1 GenSpecs §7.8.4: variable-length fields end at GS)
    const before = await scan(scrub, id, wedge)
    expect(before.body.item?.serial ?? null).not.toBe(sn)

    const s = await settings(admin)
    const r = await admin.put('/api/admin/settings', settingsBody(s, { gsSubstitute: '|' }))
    expect(r.status).toBe(200)
    expect(r.body.facility.gsSubstitute).toBe('|')
    const after = await scan(scrub, id, wedge.replace(sn, `${sn}B`))
    expect(after.status).toBe(201)
    expect(after.body.item).toMatchObject({ lot: `L${he.id}`, serial: `${sn}B` })
  })
})

describe('theatres', () => {
  it('the admin adds, renames and closes a theatre; a closed one takes no new cases but keeps its past ones', async () => {
    const g = await makeFacility()
    const { admin: ad, circulator: ci } = await signInRoles(baseURL, g, TEST_PASSWORD, ['admin', 'circulator'])
    const made = await ad.post('/api/admin/theatres', { code: 'or3', name: 'Theatre 3' })
    expect(made.status).toBe(201)
    expect((await ci.get('/api/facility')).body.theatres.map((t: any) => t.code)).toContain('OR3')
    const twice = await ad.post('/api/admin/theatres', { code: 'OR3', name: 'Another' })
    expect(twice.status).toBe(409)
    expect(twice.body.data.fields.code).toBe('Already used here.')
    const bad = await ad.post('/api/admin/theatres', { code: 'no spaces', name: '' })
    expect(bad.status).toBe(400)
    expect(Object.keys(bad.body.data.fields).sort()).toEqual(['code', 'name'])
    // a case booked into it, then the theatre closes
    const caseId = await createCase(ci, g, { theatreId: made.body.id })
    expect((await ad.patch(`/api/admin/theatres/${made.body.id}`, { code: 'OR3', name: 'Theatre 3 (old wing)', active: false })).status).toBe(200)
    expect((await ci.get('/api/facility')).body.theatres.map((t: any) => t.code)).not.toContain('OR3')
    const list = (await ad.get('/api/admin/theatres')).body
    expect(list.find((t: any) => t.id === made.body.id)).toMatchObject({ name: 'Theatre 3 (old wing)', active: false, cases: 1 })
    expect((await ci.get(`/api/cases/${caseId}`)).status).toBe(200)
    const late = await ci.post('/api/cases', newCaseBody(g, { theatreId: made.body.id }))
    expect(late.status).toBe(400)
    expect(late.body.data.fields.theatreId).toMatch(/closed to new cases/)
    // another facility's theatre is not this admin's to change
    expect((await as.admin!.patch(`/api/admin/theatres/${made.body.id}`, { code: 'X1', name: 'Taken' })).status).toBe(404)
    const audit = await testDb().selectFrom('audit_log').select('action').where('entity', '=', 'theatre').where('entity_id', '=', String(made.body.id)).orderBy('id').execute()
    expect(audit.map((a) => a.action)).toEqual(['admin.theatre_add', 'admin.theatre_change'])
    expect((await ci.post('/api/admin/theatres', { code: 'OR9', name: 'Not mine' })).status).toBe(403)
  })
})

describe('audit viewer', () => {
  it('pages the facility’s trail newest first with the actor’s name, and filters by action, actor, entity and day', async () => {
    const p = await addPerson()
    await as.admin!.patch(`/api/admin/users/${p.id}`, { role: 'surgeon' })
    const created = (await as.admin!.get('/api/admin/audit?action=user.create')).body
    expect(created.rows.length).toBeGreaterThan(0)
    expect(created.rows.every((r: any) => r.action === 'user.create')).toBe(true)
    expect(created.rows[0]).toMatchObject({ entity: 'user', entityId: String(p.id), actor: f.users.admin.name, actorId: f.users.admin.id })
    // a prefix finds the family of actions
    const userActions = (await as.admin!.get(`/api/admin/audit?action=user&entity=user&entityId=${p.id}`)).body
    expect(userActions.rows.map((r: any) => r.action)).toEqual(['user.update', 'user.create'])
    expect(userActions.rows[0].details.after.role).toBe('surgeon')
    const byActor = (await as.admin!.get(`/api/admin/audit?actor=${f.users.scrub.id}`)).body
    expect(byActor.rows.every((r: any) => r.actorId === f.users.scrub.id)).toBe(true)
    expect(byActor.rows.map((r: any) => r.action)).toContain('auth.login')
    // newest first, paged
    const page1 = (await as.admin!.get('/api/admin/audit?pageSize=2')).body
    const page2 = (await as.admin!.get('/api/admin/audit?pageSize=2&page=2')).body
    expect(page1.rows).toHaveLength(2)
    expect(page1.total).toBeGreaterThan(3)
    expect(new Date(page1.rows[0].at) >= new Date(page1.rows[1].at)).toBe(true)
    expect(new Date(page1.rows[1].at) >= new Date(page2.rows[0].at)).toBe(true)
    expect(page2.rows[0].id).not.toBe(page1.rows[1].id)
    // a day range in the facility's time zone: tomorrow has nothing yet
    const today = new Date().toISOString().slice(0, 10)
    const tomorrow = new Date(Date.now() + 86_400_000).toISOString().slice(0, 10)
    expect((await as.admin!.get(`/api/admin/audit?from=${today}&to=${today}&action=user.create`)).body.total).toBeGreaterThan(0)
    expect((await as.admin!.get(`/api/admin/audit?from=${tomorrow}`)).body.total).toBe(0)
    expect((await as.admin!.get(`/api/admin/audit?from=${tomorrow}&to=${today}`)).status).toBe(400)
    // another facility's admin does not see this trail
    const other = await makeFacility()
    const stranger = clientFrom(baseURL)
    await stranger.login(other.users.admin.email, TEST_PASSWORD)
    const theirs = (await stranger.get(`/api/admin/audit?entity=user&entityId=${p.id}`)).body
    expect(theirs.total).toBe(0)
  })

  it('shows the PHI access log: who searched, with what, how many patients and rows', async () => {
    const t = await as.coordinator!.get(`/api/trace?lot=NOPE-${tag()}`)
    expect(t.status).toBe(200)
    const r = (await as.admin!.get(`/api/admin/phi-access?user=${f.users.coordinator.id}`)).body
    expect(r.rows[0]).toMatchObject({ userId: f.users.coordinator.id, user: f.users.coordinator.name, role: 'coordinator', action: 'trace.search', patients: 0, rows: 0 })
    expect(r.rows[0].query.lot).toMatch(/^NOPE-/)
    expect((await as.admin!.get('/api/admin/phi-access?action=trace')).body.rows.length).toBeGreaterThan(0)
    expect((await as.admin!.get('/api/admin/phi-access?action=nothing.like.this')).body.total).toBe(0)
  })
})
