import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { clientFrom, type Client, signInRoles } from '../helpers/http'
import { closeTestDb, makeFacility, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { standardShelf } from '../helpers/catalog'
import { createCase, newCaseBody, reading } from '../helpers/cases'

const baseURL = inject('baseURL')
let f: TestFacility
let shelf: Awaited<ReturnType<typeof standardShelf>>
const as: Record<string, Client> = {}

beforeAll(async () => {
  f = await makeFacility()
  shelf = await standardShelf(f)
  Object.assign(as, await signInRoles(baseURL, f, TEST_PASSWORD))
})
afterAll(closeTestDb)

describe('cases', () => {
  it('a circulator books a case; the same clientKey twice makes one case', async () => {
    const body = newCaseBody(f)
    const a = await as.circulator!.post('/api/cases', body)
    const b = await as.circulator!.post('/api/cases', body)
    expect(a.status).toBe(201)
    expect(b.status).toBe(200)
    expect(b.body).toEqual({ id: a.body.id, replayed: true })
    const detail = await as.scrub!.get(`/api/cases/${a.body.id}`)
    expect(detail.body).toMatchObject({ status: 'planned', side: 'left', procedure: 'long_nail', patient: { mrn: body.patient.mrn } })
    expect(detail.body.ruleProfile).toEqual({ version: 1 })
  })

  it('bad case bodies are 400 with a message per field', async () => {
    const r = await as.circulator!.post('/api/cases', { ...newCaseBody(f), side: 'middle', scheduledTime: '25:00', patient: { mrn: '' } })
    expect(r.status).toBe(400)
    expect(r.body.data.fields).toMatchObject({
      side: expect.stringMatching(/left or right/), scheduledTime: expect.stringMatching(/HH:MM/), 'patient.mrn': expect.stringMatching(/MRN/),
    })
  })

  it('an MRN already used with another name is refused, not merged', async () => {
    const body = newCaseBody(f)
    await as.circulator!.post('/api/cases', body)
    const r = await as.circulator!.post('/api/cases', { ...newCaseBody(f), patient: { ...body.patient, familyName: 'Different' } })
    expect(r.status).toBe(409)
    expect(r.body.message).toMatch(/wristband/)
  })

  it('a scrub may not book a case; another facility cannot see it', async () => {
    expect((await as.scrub!.post('/api/cases', newCaseBody(f))).status).toBe(403)
    const id = await createCase(as.circulator!, f)
    const other = await makeFacility()
    const stranger = clientFrom(baseURL)
    await stranger.login(other.users.admin.email, TEST_PASSWORD)
    expect((await stranger.get(`/api/cases/${id}`)).status).toBe(404)
    expect((await stranger.get(`/api/cases/${id}/sizing`)).status).toBe(404)
  })
})

describe('readings', () => {
  it('bad values get 400 with a message that says what to fix', async () => {
    const id = await createCase(as.circulator!, f)
    const tooBig = await reading(as.circulator!, id, 'reamed_diameter', 25)
    expect(tooBig.status).toBe(400)
    expect(tooBig.body.data.fields.value).toBe('Last reamer must be between 7 mm and 20 mm.')
    // reamers go up in 0.5 mm steps (AO Surgery Reference)
    const offStep = await reading(as.circulator!, id, 'reamed_diameter', 11.3)
    expect(offStep.body.data.fields.value).toMatch(/0\.5 mm steps/)
    const notNumber = await as.circulator!.post(`/api/cases/${id}/readings`, { kind: 'nail_length', value: 'long', clientKey: randomUUID() })
    expect(notNumber.status).toBe(400)
    expect(notNumber.body.data.fields.value).toMatch(/number/)
    const noKey = await as.circulator!.post(`/api/cases/${id}/readings`, { kind: 'nail_length', value: 380 })
    expect(noKey.body.data.fields.clientKey).toBeTruthy()
    const badSlot = await reading(as.circulator!, id, 'distal_depth', 40, 0)
    expect(badSlot.body.data.fields.slot).toMatch(/1 to 4/)
  })

  it('a correction supersedes the old reading and keeps it in the history; the first reading opens the case', async () => {
    const id = await createCase(as.circulator!, f)
    const first = await reading(as.circulator!, id, 'nail_length', 380)
    const second = await reading(as.surgeon!, id, 'nail_length', 360)
    expect(second.body.supersedesId).toBe(first.body.id)
    const d = (await as.circulator!.get(`/api/cases/${id}`)).body
    expect(d.status).toBe('open')
    const lengths = d.readings.filter((r: any) => r.kind === 'nail_length')
    expect(lengths.map((r: any) => [r.value, r.current])).toEqual([[380, false], [360, true]])
    expect(lengths[1].enteredBy).toBe(f.users.surgeon.name)
  })

  it('a reading sent twice with one clientKey lands once', async () => {
    const id = await createCase(as.circulator!, f)
    const body = { kind: 'native_angle', value: 128, clientKey: randomUUID() }
    const a = await as.scrub!.post(`/api/cases/${id}/readings`, body)
    const b = await as.scrub!.post(`/api/cases/${id}/readings`, body)
    expect(a.status).toBe(201)
    expect(b.body).toMatchObject({ id: a.body.id, replayed: true })
    const n = await testDb().selectFrom('readings').select(({ fn }) => fn.countAll<number>().as('n')).where('case_id', '=', id).executeTakeFirstOrThrow()
    expect(Number(n.n)).toBe(1)
  })

  it('readings are for the team in the room, not for the coordinator or admin', async () => {
    const id = await createCase(as.circulator!, f)
    expect((await reading(as.coordinator!, id, 'nail_length', 380)).status).toBe(403)
    expect((await reading(as.admin!, id, 'nail_length', 380)).status).toBe(403)
    expect((await reading(as.scrub!, id, 'nail_length', 380)).status).toBe(201)
  })

  it('the database refuses to change or delete a reading (append-only)', async () => {
    const id = await createCase(as.circulator!, f)
    const r = await reading(as.circulator!, id, 'nail_length', 380)
    await expect(testDb().updateTable('readings').set({ value: 400 }).where('id', '=', r.body.id).execute()).rejects.toThrow(/append-only/)
    await expect(testDb().deleteFrom('readings').where('id', '=', r.body.id).execute()).rejects.toThrow(/append-only/)
  })
})

describe('sizing on the live shelf', () => {
  async function fullCase(side: 'left' | 'right' = 'left') {
    const id = await createCase(as.circulator!, f, { side })
    await reading(as.circulator!, id, 'reamed_diameter', 12.5)
    await reading(as.circulator!, id, 'nail_length', 385)
    await reading(as.circulator!, id, 'native_angle', 127)
    await reading(as.circulator!, id, 'head_element_length', 98)
    await reading(as.circulator!, id, 'head_compression', 5)
    await reading(as.circulator!, id, 'distal_depth', 39, 1)
    await reading(as.circulator!, id, 'distal_depth', 51, 2)
    return id
  }

  it('proposes the nail, head element and each distal screw with reasons', async () => {
    const id = await fullCase()
    const s = (await as.circulator!.get(`/api/cases/${id}/sizing`)).body
    // 12.5 − 1.0 clearance = 11.5 → 11 mm (AO Surgery Reference); 385 → 380 (at or below the reading, common practice);
    // native 127° → 130° (smallest not below native, Parry 2018); left side.
    expect(s.nail.ideal).toMatchObject({ diameterMm: 11, lengthMm: 380, angleDeg: 130, side: 'left', nailType: 'long' })
    expect(s.nail.choice?.id).toBe(s.nail.ideal.id)
    expect(s.nail.reasons.join(' ')).toMatch(/12\.5 mm/)
    expect(s.nail.ideal.locations).toEqual([{ code: 'CORE', name: 'Core store', onHand: 3 }])
    // 98 − 5 compression = 93 → 90 (never round up; Wheeless)
    expect(s.headElement.ideal).toMatchObject({ lengthMm: 90 })
    // depth 39 → 40 ('up': the tip passes the far cortex; AO Surgery Reference); 51 → none (stock ends at 50)
    expect(s.distal.map((d: any) => [d.slot, d.ideal?.lengthMm ?? null])).toEqual([[1, 40], [2, null]])
    expect(s.distal[1].warnings.map((w: any) => w.code)).toContain('no_length_for_depth')
    expect(s.caution).toMatch(/surgeon decides/)
    expect(s.rules).toMatchObject({ nailClearanceMm: 1, distalScrewRounding: 'up', tadLimitMm: 25, version: 1 })
  })

  it('says which readings are missing before it proposes anything', async () => {
    const id = await createCase(as.circulator!, f)
    await reading(as.circulator!, id, 'reamed_diameter', 12)
    const s = (await as.circulator!.get(`/api/cases/${id}/sizing`)).body
    expect(s.nail.missing).toEqual(['Nail length', 'Neck-shaft angle'])
    expect(s.nail.ideal).toBeNull()
  })

  it('follows stock changes: an empty shelf line becomes out_of_stock with in-stock alternatives', async () => {
    const id = await fullCase('right')
    const before = (await as.circulator!.get(`/api/cases/${id}/sizing`)).body
    const ideal = before.nail.ideal
    expect(ideal).toMatchObject({ diameterMm: 11, lengthMm: 380, angleDeg: 130, side: 'right' })
    const line = shelf.rows.find((r) => r.id === ideal.id)!
    await testDb().updateTable('stock_lines').set({ on_hand: 0 }).where('id', '=', line.stockLineId).execute()
    try {
      const after = (await as.circulator!.get(`/api/cases/${id}/sizing`)).body
      expect(after.nail.ideal.id).toBe(ideal.id)
      expect(after.nail.choice).toBeNull()
      expect(after.nail.warnings.map((w: any) => w.code)).toContain('out_of_stock')
      // the message names the size a nurse would fetch, not an internal id
      expect(after.nail.warnings.find((w: any) => w.code === 'out_of_stock').message).toContain('11 × 380 mm, 130°, right')
      expect(after.nail.alternatives.length).toBeGreaterThan(0)
      for (const a of after.nail.alternatives) {
        expect(a.onHand).toBeGreaterThan(0)
        expect(a.diameterMm).toBeLessThanOrEqual(11.5)
        expect(a.lengthMm).toBeLessThanOrEqual(385)
        expect(a.side).toBe('right')
      }
    } finally {
      await testDb().updateTable('stock_lines').set({ on_hand: 3 }).where('id', '=', line.stockLineId).execute()
    }
  })

  it('an expired or quarantined pack does not count as on hand', async () => {
    const id = await fullCase('right')
    const ideal = (await as.circulator!.get(`/api/cases/${id}/sizing`)).body.headElement.ideal
    const line = shelf.rows.find((r) => r.id === ideal.id)!
    await testDb().updateTable('stock_lines').set({ expiry: '2020-01-31' }).where('id', '=', line.stockLineId).execute()
    try {
      const after = (await as.circulator!.get(`/api/cases/${id}/sizing`)).body.headElement
      expect(after.choice).toBeNull()
      expect(after.warnings.map((w: any) => w.code)).toContain('out_of_stock')
    } finally {
      await testDb().updateTable('stock_lines').set({ expiry: '2030-12-31' }).where('id', '=', line.stockLineId).execute()
    }
  })

  it('tip-apex distance from the five image measurements (Baumgaertner 1995; trade.md §7.1 check values)', async () => {
    const id = await createCase(as.circulator!, f)
    for (const [k, v] of [['tad_ap_tip_apex', 18], ['tad_ap_screw_diameter', 12], ['tad_lat_tip_apex', 16], ['tad_lat_screw_diameter', 11.5], ['tad_true_screw_diameter', 10.5]] as const) {
      expect((await reading(as.surgeon!, id, k, v)).status).toBe(201)
    }
    const s = (await as.surgeon!.get(`/api/cases/${id}/sizing`)).body
    expect(s.tad).toMatchObject({ tadMm: 30.36, overLimit: true, limitMm: 25 })
    expect(s.tad.warning.code).toBe('tad_over_limit')
  })
})

describe('confirming sizes', () => {
  it('confirming the proposed nail needs the aiming-guide acknowledgement, then is recorded', async () => {
    const id = await createCase(as.circulator!, f)
    await reading(as.circulator!, id, 'reamed_diameter', 11.5)
    await reading(as.circulator!, id, 'nail_length', 360)
    await reading(as.circulator!, id, 'native_angle', 130)
    const s = (await as.surgeon!.get(`/api/cases/${id}/sizing`)).body
    const noAck = await as.surgeon!.post(`/api/cases/${id}/decisions`, { component: 'nail', chosenItemId: s.nail.ideal.id, clientKey: randomUUID() })
    expect(noAck.status).toBe(400)
    expect(noAck.body.data.fields.guideAcknowledged).toMatch(/aiming guide/)
    const ok = await as.surgeon!.post(`/api/cases/${id}/decisions`, { component: 'nail', chosenItemId: s.nail.ideal.id, guideAcknowledged: true, clientKey: randomUUID() })
    expect(ok.status).toBe(201)
    const after = (await as.circulator!.get(`/api/cases/${id}/sizing`)).body
    expect(after.nail.decision).toMatchObject({ chosenItemId: s.nail.ideal.id, guideAcknowledged: true, decidedBy: f.users.surgeon.name, reason: null })
    const audit = await testDb().selectFrom('audit_log').select(['action', 'details']).where('entity', '=', 'case').where('entity_id', '=', String(id)).where('action', '=', 'sizing.confirm').execute()
    expect(audit).toHaveLength(1)
  })

  it('an override without a reason is refused; with a reason it is kept beside the proposal', async () => {
    const id = await createCase(as.circulator!, f)
    await reading(as.circulator!, id, 'head_element_length', 97)
    const s = (await as.circulator!.get(`/api/cases/${id}/sizing`)).body
    expect(s.headElement.ideal.lengthMm).toBe(95)
    const other = shelf.find((x) => x.kind === 'head_element' && x.len === 90)
    const refused = await as.circulator!.post(`/api/cases/${id}/decisions`, { component: 'head_element', chosenItemId: other.id, clientKey: randomUUID() })
    expect(refused.status).toBe(400)
    expect(refused.body.data.fields.reason).toMatch(/reason/)
    const ok = await as.circulator!.post(`/api/cases/${id}/decisions`, { component: 'head_element', chosenItemId: other.id, reason: 'Surgeon plans 5 mm more compression', clientKey: randomUUID() })
    expect(ok.status).toBe(201)
    const row = await testDb().selectFrom('sizing_decisions').selectAll().where('id', '=', ok.body.id).executeTakeFirstOrThrow()
    expect(row).toMatchObject({ proposed_item_id: s.headElement.ideal.id, chosen_item_id: other.id, reason: 'Surgeon plans 5 mm more compression' })
    expect((row.engine as any).rules.version).toBe(1)
  })

  it('only the surgeon or circulator may confirm; a scrub may not', async () => {
    const id = await createCase(as.circulator!, f)
    await reading(as.circulator!, id, 'head_element_length', 97)
    const s = (await as.circulator!.get(`/api/cases/${id}/sizing`)).body
    for (const role of ['scrub', 'coordinator', 'admin']) {
      const r = await as[role]!.post(`/api/cases/${id}/decisions`, { component: 'head_element', chosenItemId: s.headElement.ideal.id, clientKey: randomUUID() })
      expect(r.status, role).toBe(403)
    }
  })

  it('a kind mismatch (a screw chosen as the nail) is refused', async () => {
    const id = await createCase(as.circulator!, f)
    await reading(as.circulator!, id, 'reamed_diameter', 11.5)
    await reading(as.circulator!, id, 'nail_length', 360)
    await reading(as.circulator!, id, 'native_angle', 130)
    const screw = shelf.find((x) => x.kind === 'distal_screw')
    const r = await as.surgeon!.post(`/api/cases/${id}/decisions`, { component: 'nail', chosenItemId: screw.id, reason: 'x', guideAcknowledged: true, clientKey: randomUUID() })
    expect(r.status).toBe(400)
    expect(r.body.data.fields.chosenItemId).toBeTruthy()
  })
})
