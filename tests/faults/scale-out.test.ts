import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type RunningServer } from '../helpers/server-setup'
import { closeTestDb, makeFacility, TEST_PASSWORD, type TestFacility } from '../helpers/db'
import { addItems } from '../helpers/catalog'
import { Client } from '../helpers/http'
import { createCase, gs1Scan } from '../helpers/cases'

let a: RunningServer
let b: RunningServer
let f: TestFacility

beforeAll(async () => {
  ;[a, b] = await Promise.all([startServer(), startServer()])
  f = await makeFacility()
})
afterAll(async () => {
  await Promise.all([a?.stop(), b?.stop()])
  await closeTestDb()
})

describe('two app instances on one database', () => {
  it('a session made on one instance works on the other, and live events cross instances', async () => {
    expect(a.port).not.toBe(b.port)
    const onA = new Client(a.url)
    await onA.login(f.users.circulator.email, TEST_PASSWORD)
    // the same cookie jar, pointed at the other instance (as a load balancer would do)
    const onB = new Client(b.url)
    for (const name of ['nuxt-session', 'isthmus-csrf']) { const v = onA.getCookie(name); if (v) onB.setCookie(name, v) }
    expect((await onB.get('/api/auth/me')).body.email).toBe(f.users.circulator.email)

    const id = await createCase(onA, f)
    const ctl = new AbortController()
    const res = await fetch(`${b.url}/api/cases/${id}/events`, { headers: { cookie: onB.cookieHeader() }, signal: ctl.signal })
    const reader = res.body!.getReader()
    let buf = ''
    const until = async (word: string, ms: number) => {
      const end = Date.now() + ms
      while (!buf.includes(word)) {
        if (Date.now() > end) throw new Error(`no "${word}" in ${ms} ms`)
        const chunk = await Promise.race([reader.read(), new Promise<never>((_, rej) => setTimeout(() => rej(new Error(`no "${word}" in ${ms} ms`)), end - Date.now()))])
        buf += new TextDecoder().decode(chunk.value)
      }
    }
    await until('event: ready', 3000)
    const [set] = await addItems(f, [{ kind: 'set_screw', lot: 'XI-1' }])
    const scrub = new Client(a.url)
    await scrub.login(f.users.scrub.email, TEST_PASSWORD)
    const r = await scrub.post(`/api/cases/${id}/items`, { scan: gs1Scan(set!.gtin, { expiry: '2030-12-31', lot: 'XI-1' }), source: 'wedge', clientKey: randomUUID() })
    expect(r.status).toBe(201)
    // written through instance A, heard on instance B's stream within a second
    await until(`"id":${r.body.item.id}`, 1000)
    ctl.abort()
  })
})
