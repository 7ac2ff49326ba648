import { randomUUID } from 'node:crypto'
import type { Client } from './http'
import { tag, testDb, type TestFacility } from './db'
import type { ShelfRow } from './catalog'

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

/**
 * An item already in a case record: a case booked by `c` with one implanted pack of the item, written
 * straight to the log (for what may no longer change about an item once it is in a record).
 */
export async function inCaseRecord(c: Client, f: TestFacility, item: { id: number; gtin: string }, lot: string): Promise<number> {
  const caseId = await createCase(c, f)
  await testDb().insertInto('case_items').values({
    case_id: caseId, item_id: item.id, di: item.gtin, issuer: 'GS1', lot, expiry: '2030-12-31', source: 'wedge', disposition: 'implanted',
    client_key: randomUUID(), recorded_by: f.users.scrub.id,
  }).execute()
  return caseId
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

/**
 * A case with its head element confirmed: the circulator books it and calls in a 92 mm reading, the
 * surgeon confirms the proposal (the 90 mm head element of the standard shelf). Returns the shelf row.
 */
export async function headElementCase(team: { circulator: Client; surgeon: Client }, f: TestFacility, shelf: { rows: ShelfRow[] }) {
  const id = await createCase(team.circulator, f)
  await reading(team.circulator, id, 'head_element_length', 92)
  const s = (await team.circulator.get(`/api/cases/${id}/sizing`)).body
  await confirm(team.surgeon, id, 'head_element', s.headElement.ideal.id)
  return { id, he: shelf.rows.find((r) => r.id === s.headElement.ideal.id)! }
}
