import { z } from 'zod'
import { checkGtin, checkHibccDi, checkIsoDate, checkLotOrSerial } from '../utils/recall-csv'
import { ClientKey, IsoDay } from './cases'

export const RECALL_PATIENT_STATUSES = ['open', 'surgeon_notified', 'patient_contacted', 'no_action_needed', 'closed'] as const
export const RECALL_PATIENT_LABEL: Record<(typeof RECALL_PATIENT_STATUSES)[number], string> = {
  open: 'Open', surgeon_notified: 'Surgeon notified', patient_contacted: 'Patient contacted', no_action_needed: 'No action needed', closed: 'Closed',
}

export const NewRecallBody = z.object({
  title: z.string('Give the recall a title.').trim().min(3, 'Give the recall a title.').max(200),
  noticeRef: z.string().trim().max(100).default(''),
  fdaClass: z.enum(['I', 'II', 'III'], 'Choose the recall class: I, II or III.'),
  maker: z.string().trim().max(200).default(''),
  receivedOn: IsoDay,
  clientKey: ClientKey,
})

const opt = z.string().trim().max(40).optional().transform((v) => (v ? v : undefined))

/** One affected item typed into the form; the same field checks as the CSV upload. */
export const RecallItemInput = z.object({
  gtin: opt, hibccDi: opt, lot: opt, serial: opt, expiryFrom: opt, expiryTo: opt, note: z.string().trim().max(300).optional(),
}).superRefine((v, ctx) => {
  const issue = (path: string, message: string) => ctx.addIssue({ code: 'custom', path: [path], message })
  if (!v.gtin && !v.hibccDi) issue('gtin', 'Enter the GTIN (or the HIBCC DI) from the notice.')
  if (v.gtin) { const c = checkGtin(v.gtin); if (!c.ok) issue('gtin', c.problem) }
  if (v.hibccDi) { const c = checkHibccDi(v.hibccDi); if (!c.ok) issue('hibccDi', c.problem) }
  const issuer = v.hibccDi && !v.gtin ? 'HIBCC' : 'GS1'
  if (v.lot) { const c = checkLotOrSerial(v.lot, 'lot', issuer); if (!c.ok) issue('lot', c.problem) }
  if (v.serial) { const c = checkLotOrSerial(v.serial, 'serial', issuer); if (!c.ok) issue('serial', c.problem) }
  if (v.expiryFrom) { const c = checkIsoDate(v.expiryFrom, 'expiry_from'); if (!c.ok) issue('expiryFrom', c.problem) }
  if (v.expiryTo) { const c = checkIsoDate(v.expiryTo, 'expiry_to'); if (!c.ok) issue('expiryTo', c.problem) }
  if (v.expiryFrom && v.expiryTo && v.expiryFrom > v.expiryTo) issue('expiryTo', 'The end of the expiry range is before its start.')
})

export const RecallItemsBody = z.object({ items: z.array(RecallItemInput).min(1, 'Add at least one affected item.').max(500) })

export const RecallImportBody = z.object({
  csv: z.string('Choose the CSV file from the notice.').min(1, 'The file is empty.').max(900_000, 'The file is too large for one upload (900 kB at most); split it.'),
  dryRun: z.boolean().default(true),
})

export const RecallPatientBody = z.object({
  status: z.enum(RECALL_PATIENT_STATUSES),
  note: z.string().trim().max(1000).optional(),
})

export const RecallStockBody = z.object({ status: z.enum(['to_pull', 'pulled', 'returned']) })

export const RecallPatientParams = z.object({ id: z.coerce.number().int().positive(), rpId: z.coerce.number().int().positive() })
export const RecallStockParams = z.object({ id: z.coerce.number().int().positive(), rsId: z.coerce.number().int().positive() })
