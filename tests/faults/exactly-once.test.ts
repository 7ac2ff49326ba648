import { execFileSync } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { freePort, startServer, type RunningServer } from '../helpers/server-setup'
import { closeTestDb, makeFacility, testDb, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { addItems } from '../helpers/catalog'
import { Client } from '../helpers/http'
import { gs1Scan } from '../helpers/cases'

const root = path.resolve(import.meta.dirname, '../..')
let server: RunningServer
let port: number
let f: TestFacility

beforeAll(async () => {
  port = await freePort()
  server = await startServer({}, port)
  f = await makeFacility()
})
afterAll(async () => {
  await server?.stop()
  await closeTestDb()
})

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms))

describe('no scan lost or doubled through crashes and restarts', () => {
  it('20 clients send 1,000 scans with retries while the server is killed 3 times and PostgreSQL restarts once', async () => {
    const [he] = await addItems(f, [{ kind: 'head_element', d: 10.5, len: 90, lot: 'FAULT-LOT', onHand: 5000 }])
    const base = `http://127.0.0.1:${port}`
    const caseIds: number[] = []
    const setup = new Client(base)
    await setup.login(f.users.circulator.email, TEST_PASSWORD)
    for (let i = 0; i < 4; i++) {
      const r = await setup.post('/api/cases', {
        patient: { mrn: `F-${f.tag}-${i}`, familyName: 'Fault', givenName: 'Test', birthDate: '1940-01-01', sex: 'male' },
        procedure: 'long_nail', side: 'left', surgeonId: f.users.surgeon.id, theatreId: f.theatreId,
        scheduledDay: '2026-12-01', scheduledTime: '08:00', clientKey: randomUUID(),
      })
      caseIds.push(r.body.id)
    }
    const clients = await Promise.all(Array.from({ length: 20 }, async () => {
      const c = new Client(base)
      await c.login(f.users.scrub.email, TEST_PASSWORD)
      return c
    }))

    let stop = false
    let retries = 0
    const statuses = new Map<number, number>()
    // each client: 50 scans, each retried with its own clientKey until the server gives a final answer
    const senders = clients.map(async (c, ci) => {
      for (let k = 0; k < 50; k++) {
        const body = { scan: gs1Scan(he!.gtin, { expiry: '2030-12-31', lot: 'FAULT-LOT', serial: `F${ci}-${k}-${f.tag}` }), source: 'wedge', clientKey: randomUUID() }
        const caseId = caseIds[(ci + k) % caseIds.length]!
        for (let attempt = 0; ; attempt++) {
          if (attempt > 400) throw new Error('a scan could not be delivered in 400 attempts')
          try {
            const r = await c.post(`/api/cases/${caseId}/items`, body)
            if (r.status < 500) { statuses.set(r.status, (statuses.get(r.status) ?? 0) + 1); break }
          } catch { /* connection refused or reset while the server is down */ }
          retries++
          await sleep(50 + Math.random() * 100)
        }
      }
    })
    const chaos = (async () => {
      for (let i = 0; i < 3; i++) {
        await sleep(1500)
        server.child.kill('SIGKILL')
        await new Promise((r) => server.child.once('exit', r))
        await sleep(300)
        if (i === 1) execFileSync('bash', [path.join(root, 'scripts/db.sh'), 'restart'], { stdio: 'ignore' })
        server = await startServer({}, port)
      }
      stop = true
    })()
    await Promise.all([...senders, chaos])
    expect(stop).toBe(true)
    expect(retries).toBeGreaterThan(0) // the faults really happened during the run

    // exactly 1,000 items, every one accepted once, and exactly 1,000 decrements of the shelf
    expect(Object.fromEntries(statuses)).toEqual({ 201: 1000 })
    const items = await testDb().selectFrom('case_items').select(({ fn }) => fn.countAll<number>().as('n')).where('case_id', 'in', caseIds).executeTakeFirstOrThrow()
    expect(Number(items.n)).toBe(1000)
    const moves = await testDb().selectFrom('stock_movements').select(({ fn }) => [fn.countAll<number>().as('n'), fn.sum<number>('delta').as('sum')]).where('stock_line_id', '=', he!.stockLineId).executeTakeFirstOrThrow()
    expect(Number(moves.n)).toBe(1000)
    expect(Number(moves.sum)).toBe(-1000)
    const line = await testDb().selectFrom('stock_lines').select('on_hand').where('id', '=', he!.stockLineId).executeTakeFirstOrThrow()
    expect(line.on_hand).toBe(4000)
  })
})
