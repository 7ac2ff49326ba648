// Every API route, called as nobody and as each role, against the matrix declared by hand in
// tests/helpers/route-matrix.ts: allowed roles pass the role check (anything but 401/403; an empty
// body may well be a 400), other roles get exactly 403, nobody gets exactly 401. Route files are found
// on disk, so a new route fails here until someone decides who may call it.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { ROLES, type Role } from '../../shared/utils/roles'
import { clientFrom, Client } from '../helpers/http'
import { closeTestDb, makeFacility, tag, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { addItems } from '../helpers/catalog'
import { createCase, gs1Scan, scan } from '../helpers/cases'
import { ROUTE_MATRIX, routeFiles, type RouteFile, type RouteSpec } from '../helpers/route-matrix'

const baseURL = inject('baseURL')
const routes = routeFiles()
let f: TestFacility
const as = {} as Record<Role, Client>
/** "segment/:param" → a real id in this file's own facility */
const ids: Record<string, number> = {}

async function signedIn(role: Role): Promise<Client> {
  const c = clientFrom(baseURL)
  await c.login(f.users[role].email, TEST_PASSWORD)
  return c
}

beforeAll(async () => {
  f = await makeFacility()
  for (const role of ROLES) as[role] = await signedIn(role)

  const lot = `AM${tag()}`.toUpperCase()
  const [nail] = await addItems(f, [{ kind: 'nail', d: 11, len: 360, angle: 130, side: 'left', type: 'long', lot }])
  const caseId = await createCase(as.circulator, f)
  const logged = await scan(as.circulator, caseId, gs1Scan(nail!.gtin, { expiry: '2030-12-31', lot, serial: `${lot}-1` }))
  expect(logged.status).toBe(201)
  const item = await testDb().selectFrom('case_items').select('id').where('case_id', '=', caseId).executeTakeFirstOrThrow()

  const recall = await as.coordinator.post('/api/recalls', {
    title: `Access matrix ${f.tag}`, fdaClass: 'II', receivedOn: new Date().toISOString().slice(0, 10), clientKey: randomUUID(),
  })
  expect(recall.status).toBe(201)
  const recallId = recall.body.id as number
  expect((await as.coordinator.post(`/api/recalls/${recallId}/items`, { items: [{ gtin: nail!.gtin, lot }] })).status).toBe(201)
  const rp = await testDb().selectFrom('recall_patients').select('id').where('recall_id', '=', recallId).executeTakeFirstOrThrow()
  const rs = await testDb().selectFrom('recall_stock').select('id').where('recall_id', '=', recallId).executeTakeFirstOrThrow()

  // a person of this facility for the admin's user routes to aim at, so no test user changes under us
  const target = await testDb().insertInto('users').values({
    email: `target-${f.tag}@test.isthmus.test`, name: `Target ${f.tag}`, role: 'scrub', facility_id: f.facilityId,
    password_hash: (await testDb().selectFrom('users').select('password_hash').where('id', '=', f.users.scrub.id).executeTakeFirstOrThrow()).password_hash,
  }).returning('id').executeTakeFirstOrThrow()

  const theatreId = (await testDb().selectFrom('theatres').select('id').where('facility_id', '=', f.facilityId).executeTakeFirstOrThrow()).id
  Object.assign(ids, {
    'cases/:id': caseId, 'items/:itemId': Number(item.id), 'recalls/:id': recallId, 'patients/:rpId': rp.id, 'stock/:rsId': rs.id,
    'catalog/items/:id': nail!.id, 'users/:id': target.id, 'locations/:id': f.locationId, 'theatres/:id': theatreId,
  })
})
afterAll(closeTestDb)

/** /api/cases/:id/items/:itemId → /api/cases/12/items/34, or an error that names the missing value. */
function fill(route: RouteFile): string {
  const segs = route.path.split('/')
  return segs.map((s, i) => {
    if (!s.startsWith(':')) return s
    // "catalog/items/:id" before "items/:id", so a longer name can tell two routes apart
    const long = `${segs[i - 2]}/${segs[i - 1]}/${s}`
    const short = `${segs[i - 1]}/${s}`
    const id = ids[long] ?? ids[short]
    if (id === undefined) throw new Error(`${route.file}: no id for "${short}" — add one to ids in tests/api/access-matrix.test.ts`)
    return String(id)
  }).join('/')
}

/** The status of one call; a stream is hung up on as soon as its status is known. */
async function statusOf(c: Client, method: string, url: string, spec: RouteSpec): Promise<number> {
  if (spec.stream) {
    const ctl = new AbortController()
    const headers: Record<string, string> = { accept: 'text/event-stream', ...c.headers }
    if (c.cookieHeader()) headers.cookie = c.cookieHeader()
    const r = await fetch(baseURL + url, { method, headers, signal: ctl.signal })
    ctl.abort()
    return r.status
  }
  // a deliberately empty body: a route that passes the role check may refuse it (400), which is fine
  return (await c.request(method, url, method === 'GET' || method === 'HEAD' ? undefined : {})).status
}

describe('the matrix covers the route files', () => {
  it('finds the route files (so the checks below cannot pass by finding none)', () => {
    expect(routes.length).toBeGreaterThan(20)
    expect(routes.map((r) => r.key)).toContain('GET /api/cases/:id')
  })

  it('every route file under server/api is declared in tests/helpers/route-matrix.ts', () => {
    const undeclared = routes.filter((r) => !ROUTE_MATRIX[r.key]).map((r) => `${r.key}  (${r.file})`)
    expect(undeclared, `declare who may call these routes in tests/helpers/route-matrix.ts:\n${undeclared.join('\n')}`).toEqual([])
  })

  it('every declared route still has its file', () => {
    const onDisk = new Set(routes.map((r) => r.key))
    const stale = Object.keys(ROUTE_MATRIX).filter((k) => !onDisk.has(k))
    expect(stale, `these entries of tests/helpers/route-matrix.ts have no route file any more:\n${stale.join('\n')}`).toEqual([])
  })
})

describe('every route answers each caller as declared', () => {
  it.each(routes.map((r) => [r.key, r] as const))('%s', async (_key, route) => {
    const spec = ROUTE_MATRIX[route.key]
    if (!spec) throw new Error(`${route.file} is not declared in tests/helpers/route-matrix.ts (as "${route.key}")`)
    const url = fill(route)
    const methods = route.method === 'ANY' ? ['GET', 'POST'] : [route.method]
    const wrong: string[] = []
    for (const method of methods) {
      const anon = await statusOf(new Client(baseURL), method, url, spec)
      if (spec.allow === 'public' ? anon === 401 || anon === 403 || anon >= 500 : anon !== 401) {
        wrong.push(`anonymous ${method}: got ${anon}, expected ${spec.allow === 'public' ? 'neither 401 nor 403' : '401'}`)
      }
      for (const role of ROLES) {
        const allowed = spec.allow === 'public' || spec.allow.includes(role)
        const c = spec.endsSession ? await signedIn(role) : as[role]
        const got = await statusOf(c, method, url, spec)
        // a 5xx would also mean the role check was never reached cleanly
        if (allowed ? got === 401 || got === 403 || got >= 500 : got !== 403) {
          wrong.push(`${role} ${method}: got ${got}, expected ${allowed ? 'to pass the role check (not 401/403/5xx)' : '403'}`)
        }
      }
    }
    expect(wrong, `${route.key} (${route.file})`).toEqual([])
  })
})
