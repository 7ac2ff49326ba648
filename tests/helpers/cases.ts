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

const GS = '\u001D'

/** A GS1 element string as a scanner sends it: fixed-length AIs first, GS after variable-length ones (GS1 GenSpecs §7.8.4). */
export function gs1Scan(gtin: string, p: { expiry?: string; lot?: string; serial?: string; aim?: boolean } = {}): string {
  let s = (p.aim ? ']d2' : '') + `01${gtin}`
  if (p.expiry) s += `17${p.expiry.slice(2, 4)}${p.expiry.slice(5, 7)}${p.expiry.slice(8, 10)}`
  const vars: string[] = []
  if (p.lot) vars.push(`10${p.lot}`)
  if (p.serial) vars.push(`21${p.serial}`)
  return s + vars.join(GS)
}

export async function scan(c: Client, caseId: number, scanText: string, extra: Record<string, unknown> = {}) {
  return c.post(`/api/cases/${caseId}/items`, { scan: scanText, source: 'wedge', disposition: 'implanted', clientKey: randomUUID(), ...extra })
}

export async function confirm(c: Client, caseId: number, component: 'nail' | 'head_element' | 'distal_screw', chosenItemId: number, slot = 0, reason?: string) {
  const r = await c.post(`/api/cases/${caseId}/decisions`, { component, slot, chosenItemId, guideAcknowledged: component === 'nail' ? true : undefined, reason, clientKey: randomUUID() })
  if (r.status !== 201) throw new Error(`decision failed: ${r.status} ${JSON.stringify(r.body)}`)
  return r.body.id as number
}
