import { z } from 'zod'
import { ClientKey } from './cases'

const count = (what: string) => z.coerce.number({ error: `${what} must be a whole number.` }).int(`${what} must be a whole number.`)

export const ReceiveBody = z.object({
  scan: z.string('Scan the pack’s barcode.').trim().min(1, 'Scan the pack’s barcode.').max(500),
  locationId: z.coerce.number({ error: 'Choose where the packs go.' }).int().positive('Choose where the packs go.'),
  count: count('The number of packs').min(1, 'Receive at least one pack.').max(500).default(1),
  clientKey: ClientKey,
})

export const TransferBody = z.object({
  stockLineId: z.coerce.number().int().positive(),
  toLocationId: z.coerce.number({ error: 'Choose where the packs go.' }).int().positive('Choose where the packs go.'),
  count: count('The number of packs').min(1, 'Move at least one pack.').max(500),
  clientKey: ClientKey,
})

export const ADJUST_REASONS = ['count_correction', 'damaged', 'expired_removed', 'found', 'returned_to_maker', 'other'] as const
export const ADJUST_LABEL: Record<(typeof ADJUST_REASONS)[number], string> = {
  count_correction: 'Counted: correction', damaged: 'Damaged, removed', expired_removed: 'Expired, removed', found: 'Found on the shelf',
  returned_to_maker: 'Returned to the maker', other: 'Other',
}
export const AdjustBody = z.object({
  stockLineId: z.coerce.number().int().positive(),
  count: count('The counted number').min(0, 'The count cannot be negative.').max(10_000),
  reason: z.enum(ADJUST_REASONS, 'Choose why the count changes.'),
  note: z.string().trim().max(300).optional(),
  clientKey: ClientKey,
}).superRefine((v, ctx) => {
  if (v.reason === 'other' && !v.note) ctx.addIssue({ code: 'custom', path: ['note'], message: 'Say why the count changes.' })
})

export const ParBody = z.object({
  locationId: z.coerce.number().int().positive(),
  itemId: z.coerce.number().int().positive(),
  par: count('The par level').min(0, 'The par level cannot be negative.').max(1000),
})

export const LinesQuery = z.object({
  locationId: z.coerce.number().int().positive().optional(),
  itemId: z.coerce.number().int().positive().optional(),
  q: z.string().trim().max(100).optional(),
  quarantined: z.enum(['true', 'false']).optional(),
  expiringWithin: z.coerce.number().int().refine((d) => [30, 60, 90].includes(d), 'Choose 30, 60 or 90 days.').optional(),
  limit: z.coerce.number().int().min(1).max(500).default(200),
})

export const ReplenishQuery = z.object({ locationId: z.coerce.number().int().positive() })
export const ReplenishedBody = z.object({ locationId: z.coerce.number().int().positive() })

export const UsageQuery = z.object({
  months: z.coerce.number().int().min(1).max(36).default(12),
})

/** A stock location: the core store, a theatre's nail cart. The code is what a label on the shelf says. */
export const LocationBody = z.object({
  code: z.string('Give the location a short code.').trim().toUpperCase()
    .regex(/^[A-Z0-9][A-Z0-9-]{1,19}$/, 'A code is 2 to 20 letters, digits or dashes, e.g. OR2-CART.'),
  name: z.string('Name the location.').trim().min(3, 'Name the location, e.g. “Theatre 2 nail cart”.').max(80, 'A name has at most 80 characters.'),
  theatreId: z.coerce.number().int().positive().nullable().optional(),
})
export type LocationBody = z.infer<typeof LocationBody>
