// The typed shape of the database, table by table (snake_case as in SQL). Columns with defaults are
// Generated; nullable columns are `| null`, never optional. numeric columns come back as strings
// (for decimal.js); int8 as numbers and date as 'YYYY-MM-DD' (see db/connection.ts).
import type { ColumnType, Generated, Insertable, Selectable, Updateable } from 'kysely'

type Timestamp = ColumnType<Date, Date | string, Date | string>
/** a timestamp the database fills in (DEFAULT now()) */
type DefaultTimestamp = ColumnType<Date, Date | string | undefined, Date | string>
type Numeric = ColumnType<string, string | number, string | number>
type Json<T = Record<string, unknown>> = ColumnType<T, T | string, T | string>

export type Role = 'circulator' | 'scrub' | 'surgeon' | 'coordinator' | 'admin'

export interface FacilitiesTable {
  id: Generated<number>
  code: string
  name: string
  time_zone: Generated<string>
  created_at: DefaultTimestamp
  gs_substitute: string | null
  records_inbox: string | null
  address: Generated<string>
}

export interface TheatresTable {
  id: Generated<number>
  facility_id: number
  code: string
  name: string
  active: Generated<boolean>
}

export interface UsersTable {
  id: Generated<number>
  email: string
  name: string
  role: Role
  password_hash: string
  active: Generated<boolean>
  facility_id: number | null
  created_at: DefaultTimestamp
  updated_at: DefaultTimestamp
  /** device-made key of the admin's create request (idempotent create) */
  client_key: string | null
  /** sessions signed in before this moment are refused (set by a password reset) */
  sessions_valid_after: ColumnType<Date | null, Date | string | null | undefined, Date | string | null>
}

export interface AuditLogTable {
  id: Generated<number>
  at: DefaultTimestamp
  actor_id: number | null
  action: string
  entity: string
  entity_id: string | null
  details: Json
  ip: string | null
}

export interface LoginAttemptsTable {
  id: Generated<number>
  at: DefaultTimestamp
  email: string
  ip: string
  success: boolean
}

export interface RuleProfilesTable {
  id: Generated<number>
  facility_id: number
  version: number
  nail_clearance_mm: Numeric
  distal_screw_rounding: 'up' | 'down'
  tad_limit_mm: Numeric
  created_by: number | null
  created_at: DefaultTimestamp
}

export interface PatientsTable {
  id: Generated<number>
  facility_id: number
  mrn: string
  family_name: string
  given_name: string
  birth_date: string
  sex: 'female' | 'male' | 'other' | 'unknown'
  created_at: DefaultTimestamp
}

export interface MakersTable {
  id: Generated<number>
  name: string
  address: Generated<string>
  website: Generated<string>
}

export type ItemKind = 'nail' | 'head_element' | 'distal_screw' | 'set_screw' | 'end_cap' | 'other'

export interface CatalogItemsTable {
  id: Generated<number>
  kind: ItemKind
  description: string
  maker_id: number | null
  reference: string | null
  gtin: string | null
  hibcc_di: string | null
  diameter_mm: Numeric | null
  length_mm: Numeric | null
  angle_deg: Numeric | null
  side: 'left' | 'right' | null
  nail_type: 'short' | 'long' | null
  material: Generated<string>
  unit_cost: ColumnType<string, string | number | undefined, string | number>
  implant_card: Generated<boolean>
  active: Generated<boolean>
  created_at: DefaultTimestamp
}

export interface StockLocationsTable {
  id: Generated<number>
  facility_id: number
  code: string
  name: string
  theatre_id: number | null
  replenished_at: Timestamp | null
}

export interface ParLevelsTable {
  id: Generated<number>
  location_id: number
  item_id: number
  par: number
  updated_by: number | null
  updated_at: DefaultTimestamp
}

export interface StockLinesTable {
  id: Generated<number>
  location_id: number
  item_id: number
  lot: string | null
  expiry: string | null
  on_hand: Generated<number>
  quarantined: Generated<boolean>
  updated_at: DefaultTimestamp
}

export type CaseStatus = 'planned' | 'open' | 'closed' | 'signed'

export interface CasesTable {
  id: Generated<number>
  facility_id: number
  theatre_id: number
  patient_id: number
  procedure: 'short_nail' | 'long_nail'
  side: 'left' | 'right'
  surgeon_id: number
  circulator_id: number | null
  scrub_id: number | null
  scheduled_at: Timestamp
  status: Generated<CaseStatus>
  rule_profile_id: number | null
  client_key: string | null
  created_by: number | null
  created_at: DefaultTimestamp
  opened_at: Timestamp | null
  closed_at: Timestamp | null
}

export type ReadingKind =
  | 'reamed_diameter' | 'nail_length' | 'native_angle' | 'head_element_length' | 'head_compression' | 'distal_depth'
  | 'tad_ap_tip_apex' | 'tad_ap_screw_diameter' | 'tad_lat_tip_apex' | 'tad_lat_screw_diameter' | 'tad_true_screw_diameter'

export interface ReadingsTable {
  id: Generated<number>
  case_id: number
  kind: ReadingKind
  slot: Generated<number>
  value: Numeric
  unit: 'mm' | 'deg'
  supersedes_id: number | null
  note: string | null
  client_key: string | null
  entered_by: number
  entered_at: DefaultTimestamp
}

export interface SizingDecisionsTable {
  id: Generated<number>
  case_id: number
  component: 'nail' | 'head_element' | 'distal_screw'
  slot: Generated<number>
  proposed_item_id: number | null
  chosen_item_id: number
  engine: Json
  rule_profile_id: number | null
  reason: string | null
  guide_acknowledged: Generated<boolean>
  client_key: string | null
  decided_by: number
  decided_at: DefaultTimestamp
}

export interface RecallsTable {
  id: Generated<number>
  title: string
  notice_ref: Generated<string>
  fda_class: 'I' | 'II' | 'III' | null
  maker: Generated<string>
  received_on: string | null
  status: Generated<'open' | 'closed'>
  created_by: number | null
  created_at: DefaultTimestamp
  closed_at: Timestamp | null
  client_key: string | null
}

export interface RecallItemsTable {
  id: Generated<number>
  recall_id: number
  di: string
  lot: string | null
  serial: string | null
  expiry_from: string | null
  expiry_to: string | null
  note: string | null
}

export type Disposition = 'implanted' | 'wasted' | 'explanted'
export type WasteReason = 'contaminated' | 'wrong_size' | 'damaged_package' | 'plan_changed' | 'other'
export type CaptureSource = 'camera' | 'wedge' | 'photo' | 'manual'

export interface ItemCheck {
  code: string
  message: string
  source?: string
  /** must someone confirm they have seen it before the case closes? */
  needsAck: boolean
}

export interface CaseItemsTable {
  id: Generated<number>
  case_id: number
  item_id: number | null
  raw_scan: string | null
  issuer: 'GS1' | 'HIBCC' | null
  di: string | null
  lot: string | null
  serial: string | null
  expiry: string | null
  manufactured: string | null
  hri: string | null
  source: CaptureSource
  disposition: Disposition
  waste_reason: WasteReason | null
  waste_note: string | null
  checks: Json<ItemCheck[]>
  acknowledged_by: number | null
  acknowledged_at: Timestamp | null
  acknowledgement_note: string | null
  matched_by: number | null
  matched_at: Timestamp | null
  match_reason: string | null
  stock_line_id: number | null
  client_key: string
  recorded_by: number
  recorded_at: DefaultTimestamp
}

export interface ScanEventsTable {
  id: Generated<number>
  case_id: number
  client_key: string
  raw: string | null
  source: string
  result: 'accepted' | 'check' | 'refused'
  code: string | null
  status_code: number
  response: Json<Record<string, unknown>>
  case_item_id: number | null
  scanned_by: number
  scanned_at: DefaultTimestamp
}

export interface StockMovementsTable {
  id: Generated<number>
  stock_line_id: number
  delta: number
  reason: 'implant' | 'waste' | 'receive' | 'adjust' | 'transfer' | 'return'
  case_item_id: number | null
  note: string | null
  moved_by: number | null
  moved_at: DefaultTimestamp
  client_key: string | null
}

export interface RecordVersionsTable {
  id: Generated<number>
  case_id: number
  version: number
  previous_id: number | null
  reason: string | null
  record: Json<Record<string, unknown>>
  record_hash: string
  pdf: Buffer
  pdf_hash: string
  attestation: string
  signed_by: number
  signed_at: Timestamp
}

export interface OutboxTable {
  id: Generated<number>
  created_at: DefaultTimestamp
  to_address: string
  subject: string
  body_text: string
  body_html: string | null
  attachments: ColumnType<
    { filename: string; contentType: string; contentBase64: string }[],
    { filename: string; contentType: string; contentBase64: string }[] | string | undefined,
    { filename: string; contentType: string; contentBase64: string }[] | string
  >
  kind: string
  ref: string | null
  dedupe_key: string | null
  status: Generated<'pending' | 'sending' | 'sent' | 'failed'>
  attempts: Generated<number>
  next_attempt_at: DefaultTimestamp
  last_error: string | null
  sent_at: Timestamp | null
  message_id: string | null
}

export interface PhiAccessLogTable {
  id: Generated<number>
  at: DefaultTimestamp
  user_id: number
  action: string
  query: Json
  patients: number
  rows: number
}

export type RecallPatientStatus = 'open' | 'surgeon_notified' | 'patient_contacted' | 'no_action_needed' | 'closed'

export interface RecallPatientsTable {
  id: Generated<number>
  recall_id: number
  case_item_id: number
  status: Generated<RecallPatientStatus>
  note: string | null
  updated_by: number | null
  updated_at: DefaultTimestamp
}

export interface RecallStockTable {
  id: Generated<number>
  recall_id: number
  stock_line_id: number
  on_hand_at_match: number
  status: Generated<'to_pull' | 'pulled' | 'returned'>
  updated_by: number | null
  updated_at: DefaultTimestamp
}

export interface Database {
  facilities: FacilitiesTable
  theatres: TheatresTable
  users: UsersTable
  audit_log: AuditLogTable
  login_attempts: LoginAttemptsTable
  rule_profiles: RuleProfilesTable
  patients: PatientsTable
  makers: MakersTable
  catalog_items: CatalogItemsTable
  stock_locations: StockLocationsTable
  stock_lines: StockLinesTable
  cases: CasesTable
  readings: ReadingsTable
  sizing_decisions: SizingDecisionsTable
  recalls: RecallsTable
  recall_items: RecallItemsTable
  case_items: CaseItemsTable
  scan_events: ScanEventsTable
  stock_movements: StockMovementsTable
  record_versions: RecordVersionsTable
  outbox: OutboxTable
  phi_access_log: PhiAccessLogTable
  recall_patients: RecallPatientsTable
  recall_stock: RecallStockTable
  par_levels: ParLevelsTable
}

export type UserRow = Selectable<UsersTable>
export type NewUser = Insertable<UsersTable>
export type UserUpdate = Updateable<UsersTable>
export type CaseRow = Selectable<CasesTable>
export type CatalogItemRow = Selectable<CatalogItemsTable>
export type ReadingRow = Selectable<ReadingsTable>
