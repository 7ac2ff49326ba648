/**
 * FHIR R4 (4.0.1) export of a case and of a recall's affected devices.
 *
 * Pure TypeScript with explicit imports (browser and server). The output is plain JSON: a
 * `collection` Bundle whose entries are identified by `urn:uuid:` fullUrls, so a receiver can
 * store it without a round trip to our server. Element names, cardinalities, issuer URIs and
 * codes follow standards.md A5 (HL7 FHIR R4 StructureDefinitions Device/Procedure).
 *
 * Deterministic identities. Every resource gets a name-based UUID (RFC 9562 §5.5, "version 5":
 * SHA-1 of the URL namespace + a name) built from the installation's base URL and our own keys:
 *   Patient   `${baseUrl}/fhir/Patient/mrn/${mrn}`
 *   Procedure `${baseUrl}/fhir/Procedure/case/${caseId}`
 *   Device    `${baseUrl}/fhir/Device/case-item/${itemId}`
 * So the same snapshot always gives a deep-equal Bundle, and the same implant has the same UUID in
 * a case export and in a recall export (a receiver can de-duplicate), while two installations
 * never collide. Nothing here reads a clock or a random source.
 */
import type { CaseSnapshot } from './record'
import { isValidGtin } from './udi'

// ---------------------------------------------------------------------------------------------
// Minimal FHIR R4 types for what we emit (not the full model; shared code stays dependency-free)
// ---------------------------------------------------------------------------------------------

export interface FhirCoding { system?: string; code?: string; display?: string }
export interface FhirCodeableConcept { coding?: FhirCoding[]; text?: string }
export interface FhirReference { reference?: string; display?: string }
export interface FhirIdentifier { system?: string; value?: string; type?: FhirCodeableConcept }
export interface FhirAnnotation { text: string }

export interface FhirPatient {
  resourceType: 'Patient'
  id: string
  identifier: FhirIdentifier[]
  name?: { family?: string; given?: string[] }[]
  gender: 'male' | 'female' | 'other' | 'unknown'
  birthDate?: string
}

export interface FhirUdiCarrier {
  deviceIdentifier?: string
  issuer?: string
  jurisdiction?: string
  carrierAIDC?: string
  carrierHRF?: string
  entryType?: 'barcode' | 'rfid' | 'manual' | 'card' | 'self-reported' | 'unknown'
}

export interface FhirDevice {
  resourceType: 'Device'
  id: string
  identifier: FhirIdentifier[]
  udiCarrier?: FhirUdiCarrier[]
  status: 'active' | 'inactive' | 'entered-in-error' | 'unknown'
  manufacturer?: string
  manufactureDate?: string
  expirationDate?: string
  lotNumber?: string
  serialNumber?: string
  deviceName?: { name: string; type: 'udi-label-name' | 'user-friendly-name' | 'patient-reported-name' | 'manufacturer-name' | 'model-name' | 'other' }[]
  modelNumber?: string
  type?: FhirCodeableConcept
  patient?: FhirReference
  note?: FhirAnnotation[]
}

export interface FhirProcedure {
  resourceType: 'Procedure'
  id: string
  identifier: FhirIdentifier[]
  status: 'preparation' | 'in-progress' | 'not-done' | 'on-hold' | 'stopped' | 'completed' | 'entered-in-error' | 'unknown'
  code: FhirCodeableConcept
  subject: FhirReference
  performedDateTime: string
  performer?: { function?: FhirCodeableConcept; actor: FhirReference }[]
  location?: FhirReference
  bodySite: FhirCodeableConcept[]
  focalDevice?: { action: FhirCodeableConcept; manipulated: FhirReference }[]
}

export type FhirResource = FhirPatient | FhirProcedure | FhirDevice

export interface FhirBundleEntry { fullUrl: string; resource: FhirResource }

export interface FhirBundle {
  resourceType: 'Bundle'
  identifier?: FhirIdentifier
  type: 'collection'
  timestamp?: string
  entry: FhirBundleEntry[]
}

/** The name the brief uses. */
export type Bundle = FhirBundle

// ---------------------------------------------------------------------------------------------
// Constants (HL7 FHIR R4, standards.md A5)
// ---------------------------------------------------------------------------------------------

/** HL7 FHIR R4 Device.udiCarrier.issuer (standards.md A5). HIBCC's URI really ends in "dI". */
export const UDI_ISSUER_URI = {
  GS1: 'http://hl7.org/fhir/NamingSystem/gs1-di',
  HIBCC: 'http://hl7.org/fhir/NamingSystem/hibcc-dI',
} as const

/** HL7 FHIR R4 Device.udiCarrier.jurisdiction for the US FDA (standards.md A5). */
export const FDA_UDI_JURISDICTION = 'http://hl7.org/fhir/NamingSystem/fda-udi'

export const SNOMED_CT = 'http://snomed.info/sct'

/** HL7 FHIR R4 Procedure.focalDevice.action, device-action value set (SNOMED CT; standards.md A5). */
export const DEVICE_ACTION = {
  implanted: { system: SNOMED_CT, code: '129336009', display: 'Implantation - action' },
  explanted: { system: SNOMED_CT, code: '129303008', display: 'Removal - action' },
} as const

export const PROCEDURE_TEXT = 'Cephalomedullary nailing of proximal femur'

/** RFC 9562 §6.6 NameSpace_URL: our names are URLs under the installation's base URL. */
export const UUID_NAMESPACE_URL = '6ba7b811-9dad-11d1-80b4-00c04fd430c8'

type Item = CaseSnapshot['items'][number] & {
  /** Exactly what the scanner sent, when the caller kept it (not part of the snapshot today). */
  aidc?: string | null
}
type Patient = CaseSnapshot['patient']

export interface CaseFhirOptions {
  /** e.g. "https://isthmus.example"; identifier systems and UUID names hang under it */
  baseUrl: string
  /** Also list wasted (opened, never implanted) items as inactive Devices without a patient. Default false. */
  includeWaste?: boolean
  /** udiCarrier.jurisdiction; default the FDA's URI; null leaves it out. */
  jurisdiction?: string | null
}

export interface RecallCampaign {
  id: number
  title: string
  noticeRef: string
  fdaClass: 'I' | 'II' | 'III'
  maker: string
  receivedOn: string
}

export interface RecallDevice {
  patient: Patient
  item: Item
  caseId: number
  implantedOn: string
}

export interface RecallFhirOptions {
  baseUrl: string
  /** Bundle.timestamp (an ISO instant). Left out when not given, so the output stays deterministic. */
  generatedAt?: string
  jurisdiction?: string | null
}

// ---------------------------------------------------------------------------------------------
// SHA-1 and UUID v5 (RFC 9562 §5.5). SHA-1 is used only as the name hash RFC 9562 prescribes,
// not for security.
// ---------------------------------------------------------------------------------------------

/** SHA-1 (FIPS 180-4) of bytes; small and synchronous so it runs anywhere. */
export function sha1(bytes: Uint8Array): Uint8Array {
  const ml = bytes.length
  const withPad = ((ml + 9 + 63) >> 6) << 6
  const buf = new Uint8Array(withPad)
  buf.set(bytes)
  buf[ml] = 0x80
  const view = new DataView(buf.buffer)
  // message length in bits, big-endian 64-bit (hi word covers inputs ≥ 512 MiB)
  view.setUint32(withPad - 8, Math.floor(ml / 0x20000000))
  view.setUint32(withPad - 4, (ml * 8) >>> 0)
  let h0 = 0x67452301, h1 = 0xefcdab89, h2 = 0x98badcfe, h3 = 0x10325476, h4 = 0xc3d2e1f0
  const w = new Uint32Array(80)
  const rotl = (x: number, n: number) => (x << n) | (x >>> (32 - n))
  for (let off = 0; off < withPad; off += 64) {
    for (let i = 0; i < 16; i++) w[i] = view.getUint32(off + i * 4)
    for (let i = 16; i < 80; i++) w[i] = rotl(w[i - 3]! ^ w[i - 8]! ^ w[i - 14]! ^ w[i - 16]!, 1)
    let a = h0, b = h1, c = h2, d = h3, e = h4
    for (let i = 0; i < 80; i++) {
      let f: number, k: number
      if (i < 20) { f = (b & c) | (~b & d); k = 0x5a827999 }
      else if (i < 40) { f = b ^ c ^ d; k = 0x6ed9eba1 }
      else if (i < 60) { f = (b & c) | (b & d) | (c & d); k = 0x8f1bbcdc }
      else { f = b ^ c ^ d; k = 0xca62c1d6 }
      const t = (rotl(a, 5) + f + e + k + w[i]!) >>> 0
      e = d; d = c; c = rotl(b, 30) >>> 0; b = a; a = t
    }
    h0 = (h0 + a) >>> 0; h1 = (h1 + b) >>> 0; h2 = (h2 + c) >>> 0; h3 = (h3 + d) >>> 0; h4 = (h4 + e) >>> 0
  }
  const out = new Uint8Array(20)
  const ov = new DataView(out.buffer)
  ;[h0, h1, h2, h3, h4].forEach((h, i) => ov.setUint32(i * 4, h))
  return out
}

const hex = (b: Uint8Array): string => Array.from(b, (x) => x.toString(16).padStart(2, '0')).join('')

/** Name-based UUID, version 5 (RFC 9562 §5.5): SHA-1(namespace bytes ‖ UTF-8 name), first 16 bytes, version/variant bits set. */
export function uuidV5(name: string, namespace: string = UUID_NAMESPACE_URL): string {
  const ns = namespace.replace(/-/g, '')
  if (!/^[0-9a-fA-F]{32}$/.test(ns)) throw new RangeError('uuidV5: namespace must be a UUID')
  const nsBytes = new Uint8Array(16)
  for (let i = 0; i < 16; i++) nsBytes[i] = parseInt(ns.slice(i * 2, i * 2 + 2), 16)
  const nameBytes = new TextEncoder().encode(name)
  const all = new Uint8Array(16 + nameBytes.length)
  all.set(nsBytes)
  all.set(nameBytes, 16)
  const h = sha1(all).slice(0, 16)
  h[6] = (h[6]! & 0x0f) | 0x50 // version 5
  h[8] = (h[8]! & 0x3f) | 0x80 // RFC variant (10xx)
  const x = hex(h)
  return `${x.slice(0, 8)}-${x.slice(8, 12)}-${x.slice(12, 16)}-${x.slice(16, 20)}-${x.slice(20)}`
}

const B64 = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/'

/** RFC 4648 §4 base64 of the UTF-8 bytes of `text` (no btoa/Buffer: same result everywhere). */
export function base64Utf8(text: string): string {
  const b = new TextEncoder().encode(text)
  let out = ''
  for (let i = 0; i < b.length; i += 3) {
    const n = (b[i]! << 16) | ((b[i + 1] ?? 0) << 8) | (b[i + 2] ?? 0)
    out += B64[(n >> 18) & 63]! + B64[(n >> 12) & 63]!
    out += i + 1 < b.length ? B64[(n >> 6) & 63]! : '='
    out += i + 2 < b.length ? B64[n & 63]! : '='
  }
  return out
}

// ---------------------------------------------------------------------------------------------
// Small normalisers (throw RangeError on data that cannot be exported, like record.ts does)
// ---------------------------------------------------------------------------------------------

function cleanBase(baseUrl: string): string {
  const b = typeof baseUrl === 'string' ? baseUrl.trim().replace(/\/+$/, '') : ''
  // Identifier.system is a uri (HL7 FHIR R4 datatypes); an absolute http(s) URL keeps it global.
  if (!/^https?:\/\/[^\s/?#]+(\/[^\s?#]*)?$/.test(b)) throw new RangeError(`baseUrl must be an absolute http(s) URL, got ${String(baseUrl)}`)
  return b
}

/** FHIR instant: ISO 8601 with a zone (HL7 FHIR R4 datatypes "instant"); normalised to UTC. */
function instant(value: string, what: string): string {
  const ms = Date.parse(value)
  if (typeof value !== 'string' || Number.isNaN(ms)) throw new RangeError(`${what}: not an ISO instant: ${String(value)}`)
  return new Date(ms).toISOString()
}

/** FHIR date YYYY-MM-DD; a timestamp's date part is accepted (database drivers sometimes add one). */
function fhirDate(value: string | null | undefined, what: string): string | undefined {
  if (value === null || value === undefined || value === '') return undefined
  const m = /^(\d{4})-(\d{2})-(\d{2})(?:$|T)/.exec(String(value))
  if (!m) throw new RangeError(`${what}: expected YYYY-MM-DD, got ${String(value)}`)
  const [y, mo, d] = [Number(m[1]), Number(m[2]), Number(m[3])]
  const dt = new Date(Date.UTC(y, mo - 1, d))
  if (dt.getUTCFullYear() !== y || dt.getUTCMonth() !== mo - 1 || dt.getUTCDate() !== d) {
    throw new RangeError(`${what}: not a real date: ${String(value)}`)
  }
  return `${m[1]}-${m[2]}-${m[3]}`
}

const nonEmpty = (s: string | null | undefined): string | undefined => {
  const t = typeof s === 'string' ? s.trim() : ''
  return t === '' ? undefined : t
}

function cmp(a: string | number, b: string | number): number {
  if (typeof a === 'number' && typeof b === 'number') return a - b
  const sa = String(a), sb = String(b)
  return sa < sb ? -1 : sa > sb ? 1 : 0
}

const KIND_WORDS: Record<string, string> = {
  nail: 'Intramedullary nail',
  head_element: 'Head element',
  distal_screw: 'Distal locking screw',
  set_screw: 'Set screw',
  end_cap: 'End cap',
  other: 'Other implant',
}

const WASTE_WORDS: Record<string, string> = {
  dropped: 'dropped', contaminated: 'contaminated', wrong_size: 'wrong size opened', damaged_package: 'damaged package',
  plan_changed: 'plan changed', expired: 'expired', other: 'other',
}

// ---------------------------------------------------------------------------------------------
// Resource builders
// ---------------------------------------------------------------------------------------------

interface Ctx { base: string; jurisdiction: string | null }

const urn = (uuid: string) => `urn:uuid:${uuid}`
const patientUuid = (c: Ctx, mrn: string) => uuidV5(`${c.base}/fhir/Patient/mrn/${encodeURIComponent(mrn)}`)
const procedureUuid = (c: Ctx, caseId: number) => uuidV5(`${c.base}/fhir/Procedure/case/${caseId}`)
const deviceUuid = (c: Ctx, itemId: number) => uuidV5(`${c.base}/fhir/Device/case-item/${itemId}`)

/** HL7 FHIR R4 Patient.gender, required binding administrative-gender. */
function gender(sex: string): FhirPatient['gender'] {
  return sex === 'female' || sex === 'male' || sex === 'other' ? sex : 'unknown'
}

function patientResource(c: Ctx, p: Patient): FhirPatient {
  const name: { family?: string; given?: string[] } = {}
  const family = nonEmpty(p.familyName)
  const given = nonEmpty(p.givenName)
  if (family) name.family = family
  if (given) name.given = [given]
  const out: FhirPatient = {
    resourceType: 'Patient',
    id: patientUuid(c, p.mrn),
    identifier: [{
      // HL7 v2 table 0203 "MR" (medical record number), the identifier type FHIR R4 examples use for an MRN.
      type: { coding: [{ system: 'http://terminology.hl7.org/CodeSystem/v2-0203', code: 'MR' }] },
      system: `${c.base}/fhir/sid/mrn`,
      value: p.mrn,
    }],
    gender: gender(p.sex),
  }
  // HL7 FHIR R4 JSON representation: arrays are never empty, so no name rather than [{}].
  if (name.family || name.given) out.name = [name]
  const bd = fhirDate(p.birthDate, 'patient.birthDate')
  if (bd) out.birthDate = bd
  return out
}

/** GS1 DIs go out as the 14-digit GTIN (left-padded, GS1 GenSpecs via standards.md A1.1); HIBCC as stored. */
function deviceIdentifier(item: Item): string | undefined {
  const di = nonEmpty(item.di)
  if (!di) return undefined
  if (item.issuer === 'GS1' && isValidGtin(di)) return di.padStart(14, '0')
  return di
}

function udiCarrier(c: Ctx, item: Item): FhirUdiCarrier[] | undefined {
  const di = deviceIdentifier(item)
  const hri = nonEmpty(item.hri)
  if (!di && !hri) return undefined
  const u: FhirUdiCarrier = {}
  if (di) u.deviceIdentifier = di
  // HL7 FHIR R4 Device.udiCarrier.issuer (standards.md A5)
  if (item.issuer === 'GS1' || item.issuer === 'HIBCC') u.issuer = UDI_ISSUER_URI[item.issuer]
  // HL7 FHIR R4 Device.udiCarrier.jurisdiction (standards.md A5)
  if (c.jurisdiction) u.jurisdiction = c.jurisdiction
  // HL7 FHIR R4 Device.udiCarrier.carrierAIDC: "AIDC Formats SHALL be base64 encoded" (standards.md A5).
  // Only what a scanner really sent; it is not rebuilt from the HRI (that would invent bytes).
  const aidc = typeof item.aidc === 'string' && item.aidc !== '' && item.source !== 'manual' ? item.aidc : undefined
  if (aidc) u.carrierAIDC = base64Utf8(aidc)
  if (hri) u.carrierHRF = hri
  // HL7 FHIR R4 Device.udiCarrier.entryType, required binding udi-entry-type (standards.md A5):
  // camera, keyboard-wedge scanner and label photo all read the barcode; typed in is manual.
  u.entryType = item.source === 'manual' ? 'manual' : 'barcode'
  return [u]
}

function deviceResource(c: Ctx, item: Item, patient: FhirPatient | null, notes: string[]): FhirDevice {
  const dev: FhirDevice = {
    resourceType: 'Device',
    id: deviceUuid(c, item.id),
    identifier: [{ system: `${c.base}/fhir/sid/case-item`, value: String(item.id) }],
    // HL7 FHIR R4 Device.status, required binding device-status: "active" = implanted,
    // "inactive" = removed from the patient (standards.md A5). Waste was never in a patient.
    status: item.disposition === 'implanted' ? 'active' : 'inactive',
  }
  const carrier = udiCarrier(c, item)
  if (carrier) dev.udiCarrier = carrier
  const maker = nonEmpty(item.maker?.name)
  if (maker) dev.manufacturer = maker
  const made = fhirDate(item.manufactured, `item ${item.id} manufactured`)
  if (made) dev.manufactureDate = made
  const exp = fhirDate(item.expiry, `item ${item.id} expiry`)
  if (exp) dev.expirationDate = exp
  const lot = nonEmpty(item.lot)
  if (lot) dev.lotNumber = lot
  const serial = nonEmpty(item.serial)
  if (serial) dev.serialNumber = serial
  const name = nonEmpty(item.description)
  // HL7 FHIR R4 Device.deviceName.type, required binding device-nametype.
  if (name) dev.deviceName = [{ name, type: 'user-friendly-name' }]
  dev.type = { text: KIND_WORDS[item.kind] ?? item.kind.replace(/_/g, ' ') }
  if (patient) dev.patient = { reference: urn(patient.id), display: patientDisplay(patient) }
  if (notes.length) dev.note = notes.map((text) => ({ text }))
  return dev
}

function patientDisplay(p: FhirPatient): string {
  const n = p.name?.[0]
  return [n?.family, n?.given?.join(' ')].filter(Boolean).join(', ') || (p.identifier[0]?.value ?? '')
}

function itemOrder(a: Item, b: Item): number {
  const ta = Date.parse(a.recordedAt), tb = Date.parse(b.recordedAt)
  return cmp(Number.isNaN(ta) ? 0 : ta, Number.isNaN(tb) ? 0 : tb) || cmp(a.id, b.id)
}

// ---------------------------------------------------------------------------------------------
// Public
// ---------------------------------------------------------------------------------------------

/**
 * One case as a FHIR R4 collection Bundle: Patient, Procedure (focalDevice per implanted or
 * explanted item), one Device per such item; wasted items only with `includeWaste`.
 * Throws RangeError on data that cannot be expressed (bad baseUrl, impossible dates).
 */
export function caseToFhirBundle(s: CaseSnapshot, opts: CaseFhirOptions): FhirBundle {
  const c: Ctx = { base: cleanBase(opts.baseUrl), jurisdiction: opts.jurisdiction === undefined ? FDA_UDI_JURISDICTION : opts.jurisdiction }
  const patient = patientResource(c, s.patient)
  const patientRef: FhirReference = { reference: urn(patient.id), display: patientDisplay(patient) }

  const items = [...s.items].sort(itemOrder)
  // Items with any other (unfinished) disposition are neither in nor out of the patient: left out.
  const patientItems = items.filter((i) => i.disposition === 'implanted' || i.disposition === 'explanted')
  const wasted = opts.includeWaste ? items.filter((i) => i.disposition === 'wasted') : []

  const devices = patientItems.map((i) =>
    deviceResource(c, i, patient, i.disposition === 'explanted' ? [`Removed from the patient during case ${s.case.id}.`] : []))
  const wasteDevices = wasted.map((i) => {
    const reason = nonEmpty(i.wasteReason)
    const why = reason ? `: ${WASTE_WORDS[reason] ?? reason.replace(/_/g, ' ')}` : ''
    const note = nonEmpty(i.wasteNote)
    return deviceResource(c, i, null, [`Opened during case ${s.case.id} and not implanted (wasted${why})${note ? ` — ${note}` : ''}.`])
  })

  const closed = s.case.closedAt !== null && s.case.closedAt !== undefined && s.case.closedAt !== ''
  const side = s.case.side === 'left' ? 'Left' : s.case.side === 'right' ? 'Right' : ''
  const procedure: FhirProcedure = {
    resourceType: 'Procedure',
    id: procedureUuid(c, s.case.id),
    identifier: [{ system: `${c.base}/fhir/sid/case`, value: String(s.case.id) }],
    // HL7 FHIR R4 Procedure.status, required binding event-status.
    status: closed ? 'completed' : 'in-progress',
    code: { text: PROCEDURE_TEXT },
    subject: patientRef,
    // When it started (opened), else when it was planned; an instant in UTC.
    performedDateTime: instant(s.case.openedAt ?? s.case.scheduledAt, 'case.openedAt/scheduledAt'),
    bodySite: [{ text: `${side} proximal femur`.trim() }],
  }
  const surgeon = nonEmpty(s.team?.surgeon?.name)
  if (surgeon) procedure.performer = [{ function: { text: 'Surgeon' }, actor: { display: surgeon } }]
  const theatre = nonEmpty(s.case.theatre)
  if (theatre) procedure.location = { display: theatre }
  if (devices.length) {
    // HL7 FHIR R4 Procedure.focalDevice: action (device-action, SNOMED CT) and manipulated 1..1 (standards.md A5).
    procedure.focalDevice = patientItems.map((i, k) => ({
      action: { coding: [{ ...DEVICE_ACTION[i.disposition as 'implanted' | 'explanted'] }] },
      manipulated: { reference: urn(devices[k]!.id), display: devices[k]!.deviceName?.[0]?.name ?? `Item ${i.id}` },
    }))
  }

  const entries: FhirResource[] = [patient, procedure, ...devices, ...wasteDevices]
  return {
    resourceType: 'Bundle',
    identifier: { system: `${c.base}/fhir/sid/case-export`, value: String(s.case.id) },
    type: 'collection',
    // HL7 FHIR R4 Bundle.timestamp (instant): when the record was closed, else when it was planned.
    timestamp: instant(s.case.closedAt || s.case.scheduledAt, 'case.closedAt/scheduledAt'),
    entry: entries.map((resource) => ({ fullUrl: urn(resource.id), resource })),
  }
}

/** 21 CFR 7.3 recall classes in brief (standards.md A3). */
const RECALL_CLASS_WORDS: Record<'I' | 'II' | 'III', string> = {
  I: 'reasonable probability of serious adverse health consequences or death',
  II: 'may cause temporary or medically reversible adverse health consequences',
  III: 'not likely to cause adverse health consequences',
}

/**
 * The devices a recall campaign affects, each with its Patient, as a collection Bundle whose
 * identifier names the campaign. Patients appear once (by MRN), sorted by MRN; Devices sorted by
 * case and item id, so input order does not matter.
 */
export function recallToFhirBundle(campaign: RecallCampaign, devices: RecallDevice[], opts: RecallFhirOptions): FhirBundle {
  const c: Ctx = { base: cleanBase(opts.baseUrl), jurisdiction: opts.jurisdiction === undefined ? FDA_UDI_JURISDICTION : opts.jurisdiction }
  const sorted = [...devices].sort((a, b) => cmp(a.caseId, b.caseId) || cmp(a.item.id, b.item.id))
  // A wasted unit was never in a patient (same rule as the case export): listed, but linked to nobody.
  const inPatient = (d: RecallDevice) => d.item.disposition !== 'wasted'
  const patients = new Map<string, FhirPatient>()
  for (const d of sorted) if (inPatient(d) && !patients.has(d.patient.mrn)) patients.set(d.patient.mrn, patientResource(c, d.patient))
  const seen = new Set<number>()
  const devs: FhirDevice[] = []
  const received = fhirDate(campaign.receivedOn, 'campaign.receivedOn')
  const cls = RECALL_CLASS_WORDS[campaign.fdaClass] ? `FDA class ${campaign.fdaClass} (${RECALL_CLASS_WORDS[campaign.fdaClass]})` : `class ${String(campaign.fdaClass)}`
  const campaignNote = `Recall ${campaign.id}: ${campaign.title} — notice ${campaign.noticeRef} from ${campaign.maker}, ${cls}, received ${received ?? 'on an unknown date'}.`
  for (const d of sorted) {
    if (seen.has(d.item.id)) continue // the same unit listed twice is one Device
    seen.add(d.item.id)
    const on = fhirDate(d.implantedOn, `item ${d.item.id} implantedOn`)
    const verb = d.item.disposition === 'explanted' ? 'Removed' : d.item.disposition === 'wasted' ? 'Opened, not implanted,' : 'Implanted'
    const notes = [campaignNote, on ? `${verb} on ${on} during case ${d.caseId}.` : `${verb} during case ${d.caseId}.`]
    devs.push(deviceResource(c, d.item, inPatient(d) ? patients.get(d.patient.mrn)! : null, notes))
  }
  const pats = [...patients.values()].sort((a, b) => cmp(a.identifier[0]!.value!, b.identifier[0]!.value!))
  const bundle: FhirBundle = {
    resourceType: 'Bundle',
    identifier: { system: `${c.base}/fhir/sid/recall-campaign`, value: String(campaign.id) },
    type: 'collection',
    entry: [...pats, ...devs].map((resource) => ({ fullUrl: urn(resource.id), resource })),
  }
  if (opts.generatedAt) bundle.timestamp = instant(opts.generatedAt, 'generatedAt')
  return bundle
}
