import { z } from 'zod'
import { IsoDay } from './cases'

const text = (max: number) => z.string().trim().max(max).optional().transform((v) => (v ? v : undefined))

export const TraceQuery = z.object({
  lot: text(20),
  lotMatch: z.enum(['exact', 'prefix']).default('exact'),
  serial: text(20),
  serialMatch: z.enum(['exact', 'prefix']).default('exact'),
  gtin: z.string().trim().regex(/^\d{8}$|^\d{12,14}$/, 'A GTIN has 8, 12, 13 or 14 digits.').optional().or(z.literal('').transform(() => undefined)),
  di: text(25),
  itemId: z.coerce.number().int().positive().optional(),
  from: IsoDay.optional().or(z.literal('').transform(() => undefined)),
  to: IsoDay.optional().or(z.literal('').transform(() => undefined)),
  surgeonId: z.coerce.number().int().positive().optional(),
  facilityId: z.coerce.number().int().positive().optional(),
  sort: z.enum(['date', 'mrn', 'lot', 'serial', 'surgeon', 'item']).default('date'),
  dir: z.enum(['asc', 'desc']).default('desc'),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
}).superRefine((q, ctx) => {
  if (!q.lot && !q.serial && !q.gtin && !q.di && !q.itemId && !q.from && !q.to && !q.surgeonId) {
    ctx.addIssue({ code: 'custom', path: ['lot'], message: 'Give a lot, serial, GTIN, item, date range or surgeon to search.' })
  }
  if (q.from && q.to && q.from > q.to) ctx.addIssue({ code: 'custom', path: ['to'], message: 'The end date is before the start date.' })
})
export type TraceQuery = z.infer<typeof TraceQuery>
