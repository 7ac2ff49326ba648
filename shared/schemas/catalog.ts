import { z } from 'zod'
import { isValidGtin } from '../utils/udi'

const num = (what: string, min: number, max: number) =>
  z.coerce.number({ error: `${what} must be a number.` }).min(min, `${what} must be at least ${min}.`).max(max, `${what} must be at most ${max}.`)

/** One catalog item, as the form and the route both check it. */
export const CatalogItemBody = z.object({
  kind: z.enum(['nail', 'head_element', 'distal_screw', 'set_screw', 'end_cap', 'other'], 'Choose the kind of item.'),
  description: z.string('Describe the item.').trim().min(3, 'Describe the item.').max(200),
  maker: z.string().trim().max(200).optional(),
  reference: z.string().trim().max(60).optional(),
  gtin: z.string().trim().optional().transform((v) => (v ? v.padStart(14, '0') : undefined))
    .refine((v) => v === undefined || (/^\d{14}$/.test(v) && isValidGtin(v)), 'The GTIN check digit does not match (GS1 mod 10). Copy it again from the label.'),
  hibccDi: z.string().trim().toUpperCase().regex(/^[A-Z][A-Z0-9]{3}[A-Z0-9]{1,18}[0-9]$/, 'An HIBCC DI is the labeler code, product number and unit of measure.').optional().or(z.literal('').transform(() => undefined)),
  diameterMm: num('Diameter', 1, 30).optional(),
  lengthMm: num('Length', 0, 600).optional(),
  angleDeg: num('Angle', 90, 150).optional(),
  side: z.enum(['left', 'right']).nullable().optional(),
  nailType: z.enum(['short', 'long']).nullable().optional(),
  material: z.string().trim().max(80).default(''),
  unitCost: num('Unit cost', 0, 100_000).default(0),
  implantCard: z.boolean().default(false),
}).superRefine((v, ctx) => {
  const need = (path: string, message: string) => ctx.addIssue({ code: 'custom', path: [path], message })
  if (!v.gtin && !v.hibccDi) need('gtin', 'Enter the GTIN or the HIBCC DI: the device identifier is how scans find the item.')
  if (v.kind === 'nail') {
    if (v.diameterMm === undefined) need('diameterMm', 'A nail needs its diameter.')
    if (v.lengthMm === undefined) need('lengthMm', 'A nail needs its length.')
    if (v.angleDeg === undefined) need('angleDeg', 'A nail needs its neck-shaft angle.')
    if (!v.nailType) need('nailType', 'Choose short or long.')
  }
  if ((v.kind === 'head_element' || v.kind === 'distal_screw') && v.lengthMm === undefined) need('lengthMm', 'A screw needs its length.')
})
export type CatalogItemBody = z.infer<typeof CatalogItemBody>

export const CatalogItemPatch = z.object({
  active: z.boolean().optional(),
  description: z.string().trim().min(3).max(200).optional(),
  unitCost: num('Unit cost', 0, 100_000).optional(),
  implantCard: z.boolean().optional(),
  material: z.string().trim().max(80).optional(),
  reference: z.string().trim().max(60).optional(),
})

export const CatalogListQuery = z.object({
  q: z.string().trim().max(100).optional(),
  kind: z.enum(['nail', 'head_element', 'distal_screw', 'set_screw', 'end_cap', 'other']).optional(),
  includeRetired: z.enum(['true', 'false']).optional(),
  limit: z.coerce.number().int().min(1).max(500).default(50),
  offset: z.coerce.number().int().min(0).default(0),
})

export const CatalogImportBody = z.object({
  csv: z.string('Choose the CSV file.').min(1, 'The file is empty.').max(12_000_000, 'The file is too large (12 MB at most).'),
  mapping: z.record(z.string(), z.string().nullable()).optional(),
  dryRun: z.boolean().default(true),
})
