import { z } from 'zod'

/** What the surgeon attests by signing (stored with each signature). */
export const ATTESTATION = 'I have reviewed this implant record and confirm that it is accurate and complete.'

export const SignBody = z.object({
  password: z.string('Enter your password to sign.').min(1, 'Enter your password to sign.').max(256),
})

export const AddendumBody = z.object({
  reason: z.string('Say why the record needs a correction.').trim().min(5, 'Say why the record needs a correction.').max(300),
  correction: z.string('Write the correction as it should read.').trim().min(5, 'Write the correction as it should read.').max(2000),
  password: z.string('Enter your password to sign.').min(1, 'Enter your password to sign.').max(256),
})

export const RecordPdfQuery = z.object({
  version: z.coerce.number().int().positive().optional(),
})

export const CardQuery = z.object({
  item: z.coerce.number({ error: 'Say which implant the card is for.' }).int().positive(),
})
