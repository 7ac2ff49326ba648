import { z } from 'zod'
import { ClientKey, IsoDay } from './cases'

export const WASTE_REASONS = ['contaminated', 'wrong_size', 'damaged_package', 'plan_changed', 'other'] as const
export const WASTE_LABEL: Record<(typeof WASTE_REASONS)[number], string> = {
  contaminated: 'Contaminated or dropped',
  wrong_size: 'Wrong size opened',
  damaged_package: 'Damaged package',
  plan_changed: 'Plan changed',
  other: 'Other',
}
export const DISPOSITIONS = ['implanted', 'wasted', 'explanted'] as const
export const SOURCES = ['camera', 'wedge', 'photo', 'manual'] as const

const wasteRules = (v: { disposition?: string; wasteReason?: string; wasteNote?: string }, ctx: z.RefinementCtx) => {
  if (v.disposition === 'wasted' && !v.wasteReason) {
    ctx.addIssue({ code: 'custom', path: ['wasteReason'], message: 'Choose why the pack was wasted.' })
  }
  if (v.wasteReason === 'other' && !v.wasteNote?.trim()) {
    ctx.addIssue({ code: 'custom', path: ['wasteNote'], message: 'Say in a few words why it was wasted.' })
  }
  if (v.disposition && v.disposition !== 'wasted' && v.wasteReason) {
    ctx.addIssue({ code: 'custom', path: ['wasteReason'], message: 'Only a wasted pack has a waste reason.' })
  }
}

/** Manual entry when a pack has no readable barcode: lot and expiry are required, the serial when the label has one. */
export const ManualEntry = z.object({
  itemId: z.coerce.number().int().positive().optional(),
  gtin: z.string().trim().regex(/^\d{8}$|^\d{12,14}$/, 'A GTIN has 8, 12, 13 or 14 digits.').optional(),
  lot: z.string().trim().max(20, 'A lot has at most 20 characters.').optional(),
  serial: z.string().trim().max(20, 'A serial has at most 20 characters.').optional(),
  // required, but checked below so that every missing field is named at once
  expiry: IsoDay.optional(),
}).superRefine((m, ctx) => {
  if (!m.expiry) ctx.addIssue({ code: 'custom', path: ['expiry'], message: 'Enter the expiry date from the label (YYYY-MM-DD).' })
  if (!m.itemId && !m.gtin) ctx.addIssue({ code: 'custom', path: ['gtin'], message: 'Enter the GTIN from the label, or choose the item.' })
  if (!m.lot) ctx.addIssue({ code: 'custom', path: ['lot'], message: 'Enter the lot from the label.' })
})

export const ScanBody = z.object({
  scan: z.string().max(500, 'That scan is too long to be a UDI.').optional(),
  source: z.enum(SOURCES),
  manual: ManualEntry.optional(),
  disposition: z.enum(DISPOSITIONS).default('implanted'),
  wasteReason: z.enum(WASTE_REASONS).optional(),
  wasteNote: z.string().trim().max(500).optional(),
  clientKey: ClientKey,
}).superRefine((v, ctx) => {
  if (v.source === 'manual' && !v.manual) ctx.addIssue({ code: 'custom', path: ['manual'], message: 'Enter the label details by hand.' })
  if (v.source !== 'manual' && !v.scan?.trim()) ctx.addIssue({ code: 'custom', path: ['scan'], message: 'Scan the barcode on the pack.' })
  wasteRules(v, ctx)
})
export type ScanBody = z.infer<typeof ScanBody>

export const ItemUpdateBody = z.object({
  disposition: z.enum(DISPOSITIONS),
  wasteReason: z.enum(WASTE_REASONS).optional(),
  wasteNote: z.string().trim().max(500).optional(),
}).superRefine(wasteRules)

export const AcknowledgeBody = z.object({
  note: z.string().trim().max(500).optional(),
})

export const MatchBody = z.object({
  itemId: z.coerce.number({ error: 'Choose the catalog item.' }).int().positive('Choose the catalog item.'),
  reason: z.string().trim().min(3, 'Say how you know this is the item (e.g. “REF on the label”).').max(500),
})

export const ItemParams = z.object({ id: z.coerce.number().int().positive(), itemId: z.coerce.number().int().positive() })
