import fc from 'fast-check'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type RunningServer } from '../helpers/server-setup'
import { closeTestDb, makeFacility, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { clientFrom, type Client } from '../helpers/http'
import { createCase } from '../helpers/cases'

let server: RunningServer
let f: TestFacility
const as: Record<string, Client> = {}
let caseId = 0

beforeAll(async () => {
  server = await startServer()
  f = await makeFacility()
  for (const role of ['circulator', 'scrub', 'surgeon', 'coordinator'] as const) {
    as[role] = clientFrom(server.url)
    await as[role].login(f.users[role].email, TEST_PASSWORD)
  }
  caseId = await createCase(as.circulator!, f)
})
afterAll(async () => {
  await server?.stop()
  await closeTestDb()
})

// Any JSON the write routes may receive: random values, plus near-valid bodies with one field gone wrong.
const anyJson = fc.jsonValue({ maxDepth: 3 })
const nasty = fc.oneof(fc.string(), fc.constantFrom("Robert'); DROP TABLE patients;--", '<script>alert(1)</script>', '\u0000', '\u001d', '9'.repeat(400), '-1', 'NaN', '1e308'), fc.integer(), fc.double(), fc.boolean(), fc.constant(null))
const near = fc.record({
  scan: nasty, source: fc.constantFrom('wedge', 'camera', 'photo', 'manual', 'x'), disposition: fc.constantFrom('implanted', 'wasted', 'explanted', 'y'),
  wasteReason: nasty, kind: fc.constantFrom('nail_length', 'reamed_diameter', 'distal_depth', 'z'), value: nasty, slot: nasty,
  component: fc.constantFrom('nail', 'head_element', 'distal_screw'), chosenItemId: nasty, clientKey: fc.oneof(fc.uuid(), nasty),
  patient: fc.record({ mrn: nasty, familyName: nasty, givenName: nasty, birthDate: nasty, sex: nasty }), manual: fc.record({ gtin: nasty, lot: nasty, expiry: nasty }),
}, { requiredKeys: [] })

describe('bad input never makes a 5xx', () => {
  it('10,000 generated bodies across the write routes get only 4xx answers with a message', async () => {
    const routes: [string, string][] = [
      ['scrub', `/api/cases/${caseId}/items`], ['circulator', `/api/cases/${caseId}/readings`], ['surgeon', `/api/cases/${caseId}/decisions`],
      ['circulator', '/api/cases'], ['coordinator', '/api/recalls'], ['coordinator', '/api/catalog/items'], ['circulator', '/api/auth/login'],
    ]
    const seen = new Map<number, number>()
    await fc.assert(fc.asyncProperty(fc.integer({ min: 0, max: routes.length - 1 }), fc.oneof(anyJson, near), async (ri, body) => {
      const [role, url] = routes[ri]!
      const r = await as[role]!.post(url, body as never)
      seen.set(r.status, (seen.get(r.status) ?? 0) + 1)
      // a valid body may be accepted; everything else is a 4xx that says what is wrong
      if (r.status >= 500) throw new Error(`${url} answered ${r.status} to ${JSON.stringify(body).slice(0, 200)}`)
      if (r.status >= 400) expect(typeof r.body?.message).toBe('string')
    }), { numRuns: 10_000, ...(process.env.FC_SEED ? { seed: Number(process.env.FC_SEED) } : {}) }) // FC_SEED replays a failure
    expect([...seen.keys()].every((s) => s < 500)).toBe(true)
  })
})
