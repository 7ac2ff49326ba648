import { randomUUID } from 'node:crypto'
import type { Client } from './http'
import { tag, type TestFacility } from './db'

export function newCaseBody(f: TestFacility, over: Record<string, unknown> = {}) {
  return {
    patient: { mrn: `M-${tag()}`, familyName: 'Testperson', givenName: 'Alex', birthDate: '1941-03-09', sex: 'female' },
    procedure: 'long_nail', side: 'left', surgeonId: f.users.surgeon.id, theatreId: f.theatreId,
    scheduledDay: new Date().toISOString().slice(0, 10), scheduledTime: '08:30', clientKey: randomUUID(),
    ...over,
  }
}

export async function createCase(c: Client, f: TestFacility, over: Record<string, unknown> = {}): Promise<number> {
  const r = await c.post('/api/cases', newCaseBody(f, over))
  if (r.status !== 201) throw new Error(`case not created: ${r.status} ${JSON.stringify(r.body)}`)
  return r.body.id
}

export async function reading(c: Client, caseId: number, kind: string, value: number, slot = 0) {
  return c.post(`/api/cases/${caseId}/readings`, { kind, value, slot, clientKey: randomUUID() })
}
