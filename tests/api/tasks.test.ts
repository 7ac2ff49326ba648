import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { Client, signInRoles } from '../helpers/http'
import { closeTestDb, makeFacility, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { addItems, randomGtin } from '../helpers/catalog'
import { createCase, gs1Scan, scan } from '../helpers/cases'

// Today's "Waiting for you": each role sees what it has to do, counted from the record itself.
const baseURL = inject('baseURL')
let f: TestFacility
const as: Record<string, Client> = {}
const yesterday = new Date(Date.now() - 86_400_000).toISOString().slice(0, 10) // the test facility keeps UTC
const codes = async (role: string) => ((await as[role]!.get('/api/tasks')).body.tasks as { code: string; count: number }[])

beforeAll(async () => {
  f = await makeFacility()
  Object.assign(as, await signInRoles(baseURL, f, TEST_PASSWORD))
})
afterAll(closeTestDb)

describe('what waits for each role', () => {
  it('a fresh facility asks nothing of anyone but the admin, who has no records inbox yet', async () => {
    for (const role of ['circulator', 'scrub', 'surgeon', 'coordinator']) expect(await codes(role), role).toEqual([])
    expect((await codes('admin')).map((t) => t.code)).toEqual(['no_records_inbox'])
  })

  it('counts open logs from earlier days, unmatched packs, records to sign, stock below par and near expiry', async () => {
    // yesterday's case still open, with a pack whose DI is not in the catalog
    const old = await createCase(as.circulator!, f, { scheduledDay: yesterday })
    expect((await scan(as.scrub!, old, gs1Scan(randomGtin(), { expiry: '2030-12-31', lot: 'UNK-T' }))).status).toBe(201)
    // today's cases are on the board, not in the list
    await createCase(as.circulator!, f)
    // a closed record waiting for the surgeon's signature
    const closed = await createCase(as.circulator!, f)
    await testDb().updateTable('cases').set({ status: 'closed' }).where('id', '=', closed).execute()
    // a line below its par, and one that expires in 10 days
    const [a] = await addItems(f, [{ kind: 'end_cap', lot: 'T-PAR', onHand: 1, expiry: new Date(Date.now() + 10 * 86_400_000).toISOString().slice(0, 10) }])
    expect((await as.coordinator!.put('/api/stock/par', { locationId: f.locationId, itemId: a!.id, par: 3 })).status).toBe(200)

    const circ = await codes('circulator')
    expect(circ).toEqual([expect.objectContaining({ code: 'left_open', count: 1 }), expect.objectContaining({ code: 'unmatched', count: 1 })])
    const surgeon = (await as.surgeon!.get('/api/tasks')).body.tasks
    expect(surgeon).toEqual([expect.objectContaining({ code: 'to_sign', count: 1, to: `/cases/${closed}/record` })])
    expect(surgeon[0].text).toBe('1 implant record waits for your signature.')
    const coord = await codes('coordinator')
    expect(Object.fromEntries(coord.map((t) => [t.code, t.count]))).toEqual({ left_open: 1, unmatched: 1, below_par: 1, expiring: 1 })
    expect(await codes('scrub')).toEqual([])
    // only the case's surgeon signs, so nobody else is asked to
    expect((await codes('admin')).map((t) => t.code)).toEqual(['left_open', 'below_par', 'expiring', 'no_records_inbox'])
  })
})
